import type { SheetPreview } from '../../../../shared/api/uploads.ts';
import { columnLetter } from '../../../../shared/intake/cell-reference.ts';
import { TableRegion } from '../../../components/table-region.tsx';

export interface ColumnRoles {
  [columnIndex: number]: string;
}

/**
 * The first rows of a sheet as the file holds them: row numbers and column letters as in a
 * spreadsheet, the header row and mapped columns marked, replicate rows labelled, cells whose
 * formula has no stored value flagged, and cells with a note (a warning) outlined with it as title.
 */
export function SheetPreviewTable({
  sheet,
  headerRow,
  roles,
  replicateRows,
  problemCells,
  noteCells = new Map(),
}: {
  sheet: SheetPreview;
  headerRow: number;
  roles: ColumnRoles;
  replicateRows: ReadonlySet<number>;
  /** Cell address ("C7") → the problem found there. */
  problemCells: ReadonlyMap<string, string>;
  /** Cell address → a note (a warning that does not stop the import), e.g. a negative amount. */
  noteCells?: ReadonlyMap<string, string>;
}) {
  const letters = Array.from({ length: sheet.columnCount }, (_, index) => columnLetter(index));
  return (
    <TableRegion
      label={`First rows of sheet ${sheet.name}`}
      className="rounded-md border border-rule bg-white"
    >
      <table className="w-full border-collapse text-sm" aria-label={`First rows of sheet ${sheet.name}`}>
        <thead>
          <tr className="bg-paper text-xs text-ink-muted">
            <th className="w-12 border-b border-r border-rule px-2 py-1 text-right font-normal">row</th>
            {letters.map((letter, index) => (
              <th
                key={letter}
                scope="col"
                className={`border-b border-r border-rule px-2 py-1 text-left font-normal ${roles[index] ? 'bg-ledger-light text-ledger' : ''}`}
              >
                <span className="font-mono">{letter}</span>
                {roles[index] && (
                  <span className="ml-1 font-semibold uppercase tracking-wide">{roles[index]}</span>
                )}
              </th>
            ))}
            <th className="border-b border-rule px-2 py-1 text-left font-normal">
              <span className="sr-only">Notes</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {sheet.rows.map((row, rowIndex) => {
            const rowNumber = rowIndex + 1;
            const isHeader = rowNumber === headerRow;
            const isReplicate = replicateRows.has(rowNumber);
            return (
              <tr
                key={rowNumber}
                className={`border-b border-rule/60 ${isHeader ? 'bg-ledger-light font-semibold' : ''} ${rowNumber < headerRow ? 'text-ink-muted' : ''}`}
              >
                <th
                  scope="row"
                  className="border-r border-rule px-2 py-1 text-right font-mono text-xs font-normal text-ink-muted"
                >
                  {rowNumber}
                </th>
                {row.map((cell, column) => {
                  const problem = problemCells.get(`${letters[column]}${rowNumber}`);
                  const note = noteCells.get(`${letters[column]}${rowNumber}`);
                  const formula = cell.kind === 'formula-without-value';
                  const tone = problem
                    ? 'bg-alert/15 text-alert outline outline-1 outline-alert'
                    : formula
                      ? 'bg-alert/10 text-alert'
                      : note
                        ? 'bg-paper outline-dashed outline-1 outline-ink-muted'
                        : roles[column] && !isHeader
                          ? 'bg-ledger-light/40'
                          : '';
                  return (
                    <td
                      key={letters[column]}
                      title={problem ?? (formula ? 'Formula with no stored value' : note)}
                      className={`whitespace-nowrap border-r border-rule/60 px-2 py-1 ${cell.kind === 'number' ? 'text-right tabular-nums' : ''} ${formula ? 'font-mono text-xs' : ''} ${tone}`}
                    >
                      {cell.text}
                    </td>
                  );
                })}
                <td className="px-2 py-1 text-xs">
                  {isHeader && <span className="rounded-sm bg-ledger px-1.5 py-0.5 text-white">header</span>}
                  {isReplicate && (
                    <span className="rounded-sm border border-ledger px-1.5 py-0.5 text-ledger">
                      replicate
                    </span>
                  )}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <p className="border-t border-rule px-3 py-2 text-xs text-ink-muted">
        Showing {sheet.rows.length} of {sheet.rowCount} rows, {sheet.columnCount} columns.
        {sheet.merges.length > 0 &&
          ` Merged cells: ${sheet.merges.join(', ')} (read as one value in their first cell).`}
      </p>
    </TableRegion>
  );
}
