import { structuredPatch } from 'diff';
import {
  type DiffLine,
  type DiffPart,
  partialName,
  partLabel,
  templatePartOrder,
} from '../../../shared/api/templates.ts';
import type { ReportTemplateSource } from '../reports/index.ts';

/**
 * The difference between two versions of a report template, part by part (main source, each
 * partial, stylesheet), as unified-diff hunks with old and new line numbers — what the editor's
 * "compare" view shows. Lines come from jsdiff's `structuredPatch` (Myers' O(ND) difference
 * algorithm; E. W. Myers, "An O(ND) Difference Algorithm and Its Variations", Algorithmica 1986),
 * with three lines of context around each change.
 *
 * Throws nothing. Example: diffing a letterhead "Acme" → "Acme QC" gives the part
 * 'partial "letterhead"' status 'changed', one line removed and one added.
 */

const CONTEXT_LINES = 3;

function partText(source: ReportTemplateSource, part: string): string | undefined {
  if (part === 'body') return source.body;
  if (part === 'stylesheet') return source.stylesheet;
  const name = partialName(part);
  return name !== null && Object.hasOwn(source.partials, name) ? source.partials[name] : undefined;
}

/** jsdiff marks a missing final newline with a "\ No newline at end of file" line; it is not text. */
function hunkLines(lines: string[], oldStart: number, newStart: number): DiffLine[] {
  let oldNumber = oldStart;
  let newNumber = newStart;
  const out: DiffLine[] = [];
  for (const line of lines) {
    const sign = line[0];
    const text = line.slice(1);
    if (sign === '+') out.push({ kind: 'added', oldNumber: null, newNumber: newNumber++, text });
    else if (sign === '-') out.push({ kind: 'removed', oldNumber: oldNumber++, newNumber: null, text });
    else if (sign === ' ')
      out.push({ kind: 'context', oldNumber: oldNumber++, newNumber: newNumber++, text });
  }
  return out;
}

export function diffTemplateSources(from: ReportTemplateSource, to: ReportTemplateSource): DiffPart[] {
  const parts = templatePartOrder([...Object.keys(from.partials), ...Object.keys(to.partials)]);
  return parts.map((part) => {
    const before = partText(from, part);
    const after = partText(to, part);
    const status =
      before === undefined
        ? 'added'
        : after === undefined
          ? 'removed'
          : before === after
            ? 'unchanged'
            : 'changed';
    const patch = structuredPatch(part, part, before ?? '', after ?? '', '', '', { context: CONTEXT_LINES });
    const hunks = patch.hunks.map((hunk) => ({
      // An empty side starts at line 0 in unified-diff notation; numbering the lines starts at 1.
      oldStart: Math.max(hunk.oldStart, 1),
      newStart: Math.max(hunk.newStart, 1),
      lines: hunkLines(hunk.lines, Math.max(hunk.oldStart, 1), Math.max(hunk.newStart, 1)),
    }));
    const count = (kind: DiffLine['kind']) =>
      hunks.reduce((total, hunk) => total + hunk.lines.filter((line) => line.kind === kind).length, 0);
    return { part, label: partLabel(part), status, added: count('added'), removed: count('removed'), hunks };
  });
}
