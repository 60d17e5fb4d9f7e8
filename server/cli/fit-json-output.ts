/**
 * The `fit --json` document as text in pieces, byte for byte what `JSON.stringify(document, null,
 * 2)` gives, except that a top-level field holding a generator is printed as an array whose
 * elements are taken, turned into text and let go one at a time. For 10,000 series the document
 * is some 50 MB of text; built whole, it and its text are held at once (issue 16).
 *
 * Each value is given to `JSON.stringify` with two-space indentation inside as many one-element
 * arrays as it lies deep, and cut out of them: so its lines come out indented as in the whole
 * document, without a pass over the text to indent it. A field whose value JSON leaves out (undefined, a function) is left
 * out, and an element JSON cannot write is written `null`, as `JSON.stringify` does.
 *
 * Throws what `JSON.stringify` throws (a cycle, a BigInt).
 *
 * Example: `[...jsonChunks({ a: 1, b: (function* () { yield 2; })() })].join('')` is
 * `JSON.stringify({ a: 1, b: [2] }, null, 2)`.
 */

const INDENT = '  ';

/** What JSON writes around a value held `depth` arrays deep: its lines come out indented by depth. */
const wrapping = (depth: number) => ({
  open: Array.from({ length: depth }, (_, level) => `[\n${INDENT.repeat(level + 1)}`).join('').length,
  close: Array.from({ length: depth }, (_, level) => `\n${INDENT.repeat(depth - level - 1)}]`).join('')
    .length,
});
const WRAPPINGS = [wrapping(0), wrapping(1), wrapping(2)];

function indented(value: unknown, depth: 1 | 2): string | undefined {
  let wrapped: unknown = value;
  for (let level = 0; level < depth; level++) wrapped = [wrapped];
  const text = JSON.stringify(wrapped, null, 2);
  const { open, close } = WRAPPINGS[depth] as { open: number; close: number };
  const inner = text.slice(open, text.length - close);
  // JSON writes `null` in an array for what it cannot write (undefined, a function); a field leaves it out.
  return inner === 'null' && JSON.stringify(value) === undefined ? undefined : inner;
}

function isGenerator(value: unknown): value is Generator<unknown> {
  return (
    typeof value === 'object' &&
    value !== null &&
    Object.prototype.toString.call(value) === '[object Generator]'
  );
}

function* streamedArray(items: Generator<unknown>): Generator<string> {
  let count = 0;
  for (const item of items) {
    yield `${count === 0 ? '[' : ','}\n${INDENT.repeat(2)}${indented(item, 2) ?? 'null'}`;
    count += 1;
  }
  yield count === 0 ? '[]' : `\n${INDENT}]`;
}

export function* jsonChunks(document: Record<string, unknown>): Generator<string> {
  let fields = 0;
  for (const [key, value] of Object.entries(document)) {
    const head = `${fields === 0 ? '{' : ','}\n${INDENT}${JSON.stringify(key)}: `;
    if (isGenerator(value)) {
      yield head;
      yield* streamedArray(value);
    } else {
      const text = indented(value, 1);
      if (text === undefined) continue;
      yield head + text;
    }
    fields += 1;
  }
  yield fields === 0 ? '{}' : '\n}';
}
