import { describe, expect, it } from 'vitest';
import { diffTemplateSources } from './template-editor-diff.ts';

/**
 * Part-by-part diff of two template versions. Expected hunks are worked out by hand in the
 * unified format described in the GNU diffutils manual ("Detailed Description of Unified
 * Format", gnu.org/software/diffutils/manual), with three lines of context.
 */

const base = {
  body: '<p>{{> letterhead}}</p>\n',
  partials: { letterhead: 'a\nb\nc\n' },
  stylesheet: 'p{}\n',
};

describe('diffTemplateSources', () => {
  it('one changed line: context, the removed and the added line, with old and new numbers', () => {
    const parts = diffTemplateSources(base, { ...base, partials: { letterhead: 'a\nB\nc\n' } });
    expect(parts.map((part) => [part.part, part.status])).toEqual([
      ['body', 'unchanged'],
      ['partial "letterhead"', 'changed'],
      ['stylesheet', 'unchanged'],
    ]);
    const letterhead = parts[1]!;
    expect(letterhead).toMatchObject({ added: 1, removed: 1 });
    expect(letterhead.hunks).toEqual([
      {
        oldStart: 1,
        newStart: 1,
        lines: [
          { kind: 'context', oldNumber: 1, newNumber: 1, text: 'a' },
          { kind: 'removed', oldNumber: 2, newNumber: null, text: 'b' },
          { kind: 'added', oldNumber: null, newNumber: 2, text: 'B' },
          { kind: 'context', oldNumber: 3, newNumber: 3, text: 'c' },
        ],
      },
    ]);
  });

  it('a partial added in the later version is listed as added, every line new', () => {
    const parts = diffTemplateSources(base, { ...base, partials: { ...base.partials, footer: 'x\ny\n' } });
    const footer = parts.find((part) => part.part === 'partial "footer"')!;
    expect(footer).toMatchObject({ status: 'added', added: 2, removed: 0, label: 'Partial: footer' });
    expect(footer.hunks[0]!.lines.map((line) => line.newNumber)).toEqual([1, 2]);
  });

  it('identical versions have no hunks', () => {
    expect(diffTemplateSources(base, base).every((part) => part.hunks.length === 0)).toBe(true);
  });
});
