import { describe, expect, it } from 'vitest';
import { jsonChunks } from './fit-json-output.ts';

function* items<T>(values: T[]): Generator<T> {
  yield* values;
}

const text = (document: Record<string, unknown>) => [...jsonChunks(document)].join('');

describe('jsonChunks', () => {
  it('writes what JSON.stringify writes with two-space indentation, a generator as an array', () => {
    const entries = [
      {
        id: 'QV-001',
        n: 7,
        models: [{ k: 0.004, ci: [0.003, 0.005] }],
        empty: [],
        none: {},
        note: 'a\nb "q"',
      },
      { id: 'QV-002', n: 0, skipped: undefined, error: { code: 'too-few-points' } },
    ];
    const rest = { arrhenius: null, warnings: ['one', 'two'], q1e: { nested: { deeper: [1, [2, [3]]] } } };
    const streamed = text({ engineVersion: '0.3.0', series: items(entries), ...rest });
    expect(streamed).toBe(JSON.stringify({ engineVersion: '0.3.0', series: entries, ...rest }, null, 2));
  });

  it('writes an empty generator as [] and leaves out fields JSON leaves out', () => {
    const document = { series: items([]), gone: undefined, call: () => 1, kept: 0 };
    expect(text(document)).toBe(
      JSON.stringify({ series: [], gone: undefined, call: () => 1, kept: 0 }, null, 2),
    );
    expect(text(document)).not.toContain('gone');
  });

  it('writes an element JSON cannot write as null, as JSON.stringify does in an array', () => {
    const values = [1, undefined, () => 2];
    expect(text({ list: items(values) })).toBe(JSON.stringify({ list: values }, null, 2));
    expect(text({ list: items(values) })).toContain('null');
  });

  it('writes an empty document as {} and takes each element only when its text is wanted', () => {
    expect(text({})).toBe('{}');
    let taken = 0;
    function* counted() {
      for (const id of ['a', 'b', 'c']) {
        taken += 1;
        yield { id };
      }
    }
    const chunks = jsonChunks({ head: 1, series: counted() });
    chunks.next();
    chunks.next();
    expect(taken).toBe(0);
    chunks.next();
    expect(taken).toBe(1);
  });

  it('refuses what JSON.stringify refuses', () => {
    expect(() => text({ big: 1n })).toThrow(TypeError);
  });
});
