import type { DiffPart, TemplateDiffResponse } from '../../../../shared/api/templates.ts';
import { TableRegion } from '../../../components/table-region.tsx';

const LINE_CLASS = {
  added: 'bg-ledger-light text-ink',
  removed: 'bg-alert/10 text-ink',
  context: 'text-ink-muted',
} as const;
const SIGN = { added: '+', removed: '−', context: ' ' } as const;

function PartDiff({ part }: { part: DiffPart }) {
  return (
    <section aria-label={`Changes in ${part.label}`} className="mt-3">
      <h4 className="text-sm font-semibold">
        {part.label}{' '}
        <span className="font-normal text-ink-muted">
          {part.status === 'added' ? '(new part) ' : part.status === 'removed' ? '(removed) ' : ''}+
          {part.added} −{part.removed}
        </span>
      </h4>
      <TableRegion label={`Lines changed in ${part.label}`} className="mt-1">
        <table className="w-full border-collapse font-mono text-xs">
          <tbody>
            {part.hunks.map((hunk) => [
              <tr key={`${hunk.oldStart}-${hunk.newStart}`} className="bg-paper text-ink-muted">
                <td colSpan={4} className="px-2 py-0.5">
                  @@ line {hunk.oldStart} → line {hunk.newStart}
                </td>
              </tr>,
              ...hunk.lines.map((line, index) => (
                <tr
                  // biome-ignore lint/suspicious/noArrayIndexKey: diff lines have no identity beyond their place
                  key={`${hunk.oldStart}-${hunk.newStart}-${index}`}
                  className={LINE_CLASS[line.kind]}
                  data-kind={line.kind}
                >
                  <td className="w-10 select-none px-1 text-right text-ink-muted">{line.oldNumber ?? ''}</td>
                  <td className="w-10 select-none px-1 text-right text-ink-muted">{line.newNumber ?? ''}</td>
                  <td className="w-4 select-none text-center" aria-label={line.kind}>
                    {SIGN[line.kind]}
                  </td>
                  <td className="whitespace-pre-wrap break-all px-1">{line.text}</td>
                </tr>
              )),
            ])}
          </tbody>
        </table>
      </TableRegion>
    </section>
  );
}

/** The unified difference of two versions, part by part; unchanged parts are named, not shown. */
export function VersionDiff({ diff }: { diff: TemplateDiffResponse }) {
  const changed = diff.parts.filter((part) => part.status !== 'unchanged');
  const unchanged = diff.parts.filter((part) => part.status === 'unchanged');
  return (
    <section aria-label={`Version ${diff.from.versionNumber} compared with version ${diff.to.versionNumber}`}>
      <p className="text-sm">
        From version {diff.from.versionNumber} (
        <span className="font-mono text-xs">{diff.from.sha256.slice(0, 12)}</span>) to version{' '}
        {diff.to.versionNumber} (<span className="font-mono text-xs">{diff.to.sha256.slice(0, 12)}</span>):{' '}
        {changed.length === 0
          ? 'the text is the same.'
          : `${changed.length} part${changed.length === 1 ? '' : 's'} changed.`}
      </p>
      {changed.map((part) => (
        <PartDiff key={part.part} part={part} />
      ))}
      {unchanged.length > 0 && (
        <p className="mt-2 text-xs text-ink-muted">
          Unchanged: {unchanged.map((part) => part.label).join(', ')}.
        </p>
      )}
    </section>
  );
}
