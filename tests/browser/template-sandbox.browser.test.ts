import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BrowserPool } from '../../server/features/reports/pdf/browser-pool.ts';
import { type PrintPdfResult, printPdf } from '../../server/features/reports/pdf/print-pdf.ts';
import {
  compileReportTemplate,
  TemplateError,
} from '../../server/features/reports/render/template-engine.ts';

/**
 * A hostile template, printed through the real pipeline: a script that would change the visible
 * text, images, stylesheets, fonts, frames and a refresh pointing at an outside address and at a
 * loopback server that counts every request it receives, and prototype-access expressions. The
 * script must not run, no request may reach any network (the loopback server must see none, and
 * the page's request log must show every attempt aborted), and nothing of the server's insides
 * may appear in the PDF.
 */

const CANARY = 'rateledger-canary-8d1f3c';
const FILE_CANARY = 'local-file-canary-5e2a90';
let hits: string[] = [];
let server: Server;
let origin = '';
const pool = new BrowserPool({ size: 1 });
const folder = mkdtempSync(path.join(os.tmpdir(), 'rateledger-sandbox-test-'));
const localFile = path.join(folder, 'secret.txt');
let result: PrintPdfResult;
let text = '';

const hostileBody = () => `<!DOCTYPE html><html><head><title>Sandbox</title>{{reportStyles}}
<link rel="stylesheet" href="${origin}/linked.css">
<link rel="preconnect" href="${origin}">
<meta http-equiv="refresh" content="0;url=${origin}/refresh">
<style>@import url(${origin}/imported.css); @font-face { font-family: Remote; src: url(${origin}/remote.woff2); } .remote { font-family: Remote; }</style>
<script src="${origin}/external.js"></script>
</head><body>
<p id="marker">script did not run</p>
<script>document.title = 'ran'; document.getElementById('marker').textContent = 'SCRIPT RAN';</script>
<img src="https://example.invalid/x.png" alt="">
<img src="${origin}/img.png" alt="">
<img src="file://${localFile}" alt="">
<iframe src="file://${localFile}"></iframe>
<div style="width:10px;height:10px;background-image:url(${origin}/inline-style.png)"></div>
<p class="remote">remote font text</p>
<iframe src="${origin}/frame"></iframe>
<object data="${origin}/object.pdf"></object>
<p>product: {{product}}</p>
<p>proto: [{{lookup this "__proto__"}}]</p>
<p>ctor: [{{#with (lookup this "constructor")}}{{name}}{{/with}}]</p>
<p>ctor name: [{{lookup (lookup this "constructor") "name"}}]</p>
<p>proto keys: [{{#each (lookup this "__proto__")}}{{@key}}{{/each}}]</p>
<p>nested: [{{#with nested}}{{constructor}}{{__proto__}}{{/with}}]</p>
</body></html>`;

beforeAll(async () => {
  server = createServer((request, response) => {
    hits.push(request.url ?? '');
    response.end('x');
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  process.env.RATELEDGER_SANDBOX_CANARY = CANARY;
  writeFileSync(localFile, FILE_CANARY);
  const template = compileReportTemplate({
    body: hostileBody(),
    partials: {},
    stylesheet: `body { background-image: url(${origin}/stylesheet.png); }`,
  });
  const html = template.render({
    context: { product: '<script>document.title="x"</script>Veltrazine', nested: { a: 1 } },
    figures: new Map(),
    paper: 'A4',
  });
  hits = [];
  result = await printPdf(pool, {
    html,
    paper: 'A4',
    header: { reportNumber: 'SANDBOX-1', version: 1, organisation: 'Sandbox Lab' },
    metadata: { title: 'Sandbox', author: 'Test', subject: 'Sandbox', keywords: [] },
  });
  const file = path.join(folder, 'sandbox.pdf');
  writeFileSync(file, result.pdf);
  text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ');
});
afterAll(async () => {
  delete process.env.RATELEDGER_SANDBOX_CANARY;
  await pool.close();
  await new Promise((resolve) => server?.close(resolve));
  rmSync(folder, { recursive: true, force: true });
});

describe('a hostile template', () => {
  it('does not run its script (JavaScript is off in the page)', () => {
    expect(text).toContain('script did not run');
    expect(text).not.toContain('SCRIPT RAN');
  });

  it('reaches no network: the loopback server saw no request, and every attempt was aborted', () => {
    expect(hits).toEqual([]);
    const blocked = result.requests.blockedUrls;
    expect(blocked).toContain('https://example.invalid/x.png');
    for (const resource of ['/img.png', '/linked.css', '/stylesheet.png', '/inline-style.png', '/frame']) {
      expect(blocked, resource).toContain(`${origin}${resource}`);
    }
    expect(result.requests.blocked).toBe(blocked.length);
    expect(result.requests.blocked).toBeGreaterThanOrEqual(7);
    // Only the report's own inlined fonts (data: URLs) were let through.
    expect(result.requests.allowed).toBeGreaterThan(0);
  });

  it('prints values escaped and prototype expressions as nothing, leaking no code or environment', () => {
    expect(text).toContain('product: <script>document.title="x"</script>Veltrazine');
    for (const label of ['proto', 'ctor', 'ctor name', 'proto keys', 'nested'])
      expect(text).toContain(`${label}: []`);
    expect(text).not.toMatch(/function|native code|\[object|Object|process|RATELEDGER|PATH=/);
    expect(text).not.toContain(CANARY);
  });

  it('shows no local file: Chromium refuses file: URLs from the report page before any request', () => {
    expect(readFileSync(localFile, 'utf8')).toBe(FILE_CANARY);
    expect(text).not.toContain(FILE_CANARY);
    expect(result.requests.blockedUrls.filter((url) => url.startsWith('file:'))).toEqual([]);
  });

  it('refuses {{constructor.constructor}} with a located error that leaks nothing', () => {
    const template = compileReportTemplate({
      body: '<p>{{constructor.constructor "return process"}}</p>',
      partials: {},
      stylesheet: '',
    });
    expect(() => template.render({ context: {}, figures: new Map(), paper: 'A4' })).toThrow(TemplateError);
    try {
      template.render({ context: {}, figures: new Map(), paper: 'A4' });
    } catch (error) {
      expect((error as Error).message).toMatch(/^body, line 1, column \d+: /);
      expect((error as Error).message).not.toMatch(/native code|process\.env|CANARY/);
      expect((error as Error).message).not.toContain(CANARY);
    }
  });
});
