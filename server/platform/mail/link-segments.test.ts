import { describe, expect, it } from 'vitest';
import { linkSegments } from './link-segments.ts';

describe('linkSegments: only links to the app itself become links', () => {
  it('links an address on the base URL and leaves the sentence punctuation outside', () => {
    expect(linkSegments('Open https://app.test/reports/7.', 'https://app.test')).toEqual([
      { text: 'Open ' },
      { text: 'https://app.test/reports/7', href: 'https://app.test/reports/7' },
      { text: '.' },
    ]);
  });

  it('keeps foreign hosts, other ports, other schemes and credentials as plain text', () => {
    const body = [
      'https://evil.example/reports/7',
      'http://app.test:8080/x',
      'http://app.test/x',
      'https://user:pw@app.test/x',
      'javascript:alert(1)',
      'https://app.test.evil.example/x',
    ].join(' ');
    const segments = linkSegments(body, 'https://app.test');
    expect(segments).toEqual([{ text: body }]);
  });

  it('respects a base path: /rateledger/... links, /other/... does not', () => {
    const segments = linkSegments(
      'a http://h.test/rateledger/reports/1 b http://h.test/other c http://h.test/rateledgerx',
      'http://h.test/rateledger/',
    );
    expect(segments.filter((segment) => segment.href).map((segment) => segment.href)).toEqual([
      'http://h.test/rateledger/reports/1',
    ]);
    expect(segments.map((segment) => segment.text).join('')).toBe(
      'a http://h.test/rateledger/reports/1 b http://h.test/other c http://h.test/rateledgerx',
    );
  });

  it('a body without addresses is one text segment, an empty body none', () => {
    expect(linkSegments('no links <here>', 'http://127.0.0.1:3000')).toEqual([{ text: 'no links <here>' }]);
    expect(linkSegments('', 'http://127.0.0.1:3000')).toEqual([]);
  });
});
