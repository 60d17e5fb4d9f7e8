import { useEffect, useMemo, useState } from 'react';
import type { SavedMapping } from '../../../../shared/api/uploads.ts';
import { ApiError } from '../../../lib/http.ts';
import { usePreview } from '../api/get-preview.ts';
import { importProblems, useImportUpload } from '../api/import-upload.ts';
import type { AttributeChoice } from '../attribute-draft.ts';
import {
  checkDraft,
  columnOptions,
  columnsChosenTwice,
  describeColumnChosenTwice,
  draftFromMapping,
  guessDraft,
  type MappingDraft,
} from '../mapping-draft.ts';
import { AttributeFields } from './attribute-fields.tsx';
import { DuplicateImportReason } from './duplicate-import-reason.tsx';
import { ImportSummary } from './import-summary.tsx';
import { MappingFields } from './mapping-fields.tsx';
import { type ListedProblem, ProblemList } from './problem-list.tsx';
import { type ColumnRoles, SheetPreviewTable } from './sheet-preview-table.tsx';

/** How long the form waits after the last change before checking the mapping on the server. */
const CHECK_DELAY_MS = 350;

function useDebounced<T>(value: T, delay: number): T {
  const [settled, setSettled] = useState(value);
  const key = JSON.stringify(value);
  // biome-ignore lint/correctness/useExhaustiveDependencies: the serialised key stands for the value
  useEffect(() => {
    const timer = setTimeout(() => setSettled(value), delay);
    return () => clearTimeout(timer);
  }, [key, delay]);
  return settled;
}

const plural = (count: number, noun: string) => `${count} ${noun}${count === 1 ? '' : 's'}`;

/** Cell address ("C7") → message, for the entries whose place is one cell of this sheet. */
function cellsOnSheet(entries: readonly ListedProblem[], sheetName: string): Map<string, string> {
  const cells = new Map<string, string>();
  for (const entry of entries) {
    const address = /^(?:'((?:[^']|'')+)'|([^!]+))!([A-Z]+\d+)$/.exec(entry.where ?? '');
    const name = address?.[1]?.replaceAll("''", "'") ?? address?.[2];
    if (address?.[3] && name === sheetName && !cells.has(address[3])) cells.set(address[3], entry.message);
  }
  return cells;
}

const ROLE_FIELDS = [
  ['timeColumn', 'time'],
  ['valueColumn', 'value'],
  ['seriesColumn', 'batch'],
  ['temperatureColumn', 'temp.'],
  ['replicateColumn', 'replicate'],
] as const;

/** Choose sheet and columns, see the whole sheet checked, import, then run the analysis. */
export function MappingWorkbench({
  uploadId,
  studyId,
  valueUnit,
  attributes = [],
}: {
  uploadId: string;
  studyId: string;
  valueUnit: string;
  /** The study's attributes; with more than one the form asks which column measures which. */
  attributes?: readonly AttributeChoice[];
}) {
  const [draft, setDraft] = useState<MappingDraft | null>(null);
  const [touched, setTouched] = useState(false);
  const [saveAs, setSaveAs] = useState('');
  const [saveWanted, setSaveWanted] = useState(false);
  const [dismissedOffer, setDismissedOffer] = useState(false);
  const checked = draft ? checkDraft(draft, attributes) : null;
  const mapping = useDebounced(checked?.ok ? checked.mapping : null, CHECK_DELAY_MS);
  const preview = usePreview(uploadId, mapping);
  const importer = useImportUpload(uploadId);

  const data = preview.data;
  useEffect(() => {
    if (data && draft === null && data.sheets[0]) setDraft(guessDraft(data.sheets[0], valueUnit, attributes));
  }, [data, draft, valueUnit, attributes]);

  const sheet = data?.sheets.find((candidate) => candidate.name === draft?.sheet) ?? data?.sheets[0];
  const headerRow = Number(draft?.headerRow ?? 0) || 0;
  const columns = useMemo(() => (sheet ? columnOptions(sheet, headerRow) : []), [sheet, headerRow]);

  if (preview.isPending) return <p className="text-sm text-ink-muted">Reading the file…</p>;
  if (preview.isError && !data)
    return (
      <p role="alert" className="rounded-sm border border-alert/40 bg-alert/10 px-3 py-2 text-sm text-alert">
        The file could not be previewed: {preview.error.message}
      </p>
    );
  if (!data || !draft || !sheet) return null;

  if (importer.isSuccess) return <ImportSummary result={importer.data} studyId={studyId} />;

  const update = (patch: Partial<MappingDraft>) => {
    setTouched(true);
    importer.reset();
    setDraft((current) => {
      if (!current) return current;
      if (patch.sheet && patch.sheet !== current.sheet) {
        const next = data.sheets.find((candidate) => candidate.name === patch.sheet);
        return next ? guessDraft(next, valueUnit, attributes) : { ...current, ...patch };
      }
      return { ...current, ...patch };
    });
  };
  const applySaved = (saved: SavedMapping) => {
    setDraft(draftFromMapping(saved.mapping, sheet.name));
    setDismissedOffer(true);
    setTouched(true);
  };

  const errors = checked && !checked.ok && touched ? checked.errors : {};
  const roles: ColumnRoles = {};
  for (const [field, role] of ROLE_FIELDS) {
    const index = columns.findIndex((option) => option.value !== '' && option.value === draft[field]);
    if (index >= 0) roles[index] = role;
  }
  const attributeRoles: [string, string][] =
    draft.layout === 'long'
      ? [[draft.attributeColumn, 'attribute']]
      : draft.layout === 'wide'
        ? draft.moreValueColumns.map((entry) => [
            entry.column,
            entry.attribute === '' ? 'value' : entry.attribute,
          ])
        : [];
  for (const [chosen, role] of attributeRoles) {
    const index = columns.findIndex((option) => option.value !== '' && option.value === chosen);
    if (index >= 0 && roles[index] === undefined) roles[index] = role;
  }
  const current =
    mapping !== null && checked?.ok && JSON.stringify(mapping) === JSON.stringify(checked.mapping);
  const check = current && !preview.isPlaceholderData ? data.check : null;
  const replicateRows = new Set(check?.replicateRows ?? []);
  const refused = importer.error instanceof ApiError ? importer.error : null;
  const refusedProblems = refused ? importProblems(refused) : [];
  const offers = dismissedOffer ? [] : data.savedMappings;
  const problemCells = cellsOnSheet([...(check?.problems ?? []), ...refusedProblems], sheet.name);
  const noteCells = cellsOnSheet(check?.warnings ?? [], sheet.name);

  const submit = () => {
    setTouched(true);
    if (!checked?.ok) return;
    importer.mutate({
      mapping: checked.mapping,
      ...(saveWanted && saveAs.trim() !== '' ? { saveMappingAs: saveAs.trim() } : {}),
    });
  };

  return (
    <div className="space-y-6">
      {offers.length > 0 && (
        <div
          role="status"
          className="flex flex-wrap items-center gap-3 rounded-sm border border-ledger/40 bg-ledger-light px-4 py-3 text-sm"
        >
          <span>This file has the layout of a saved mapping:</span>
          {offers.map((offer) => (
            <button
              key={offer.id}
              type="button"
              onClick={() => applySaved(offer)}
              className="rounded-sm bg-ledger px-3 py-1 font-semibold text-white hover:bg-ledger-dark"
            >
              Use “{offer.name}”
            </button>
          ))}
          <button type="button" onClick={() => setDismissedOffer(true)} className="underline">
            Map by hand
          </button>
        </div>
      )}
      <section aria-label="Column mapping" className="rounded-md border border-rule bg-white p-5">
        <MappingFields
          draft={draft}
          errors={errors}
          sheetNames={data.sheets.map((entry) => entry.name)}
          columns={columns}
          onChange={update}
        />
        {attributes.length > 1 && (
          <AttributeFields
            draft={draft}
            errors={errors}
            columns={columns}
            attributes={attributes}
            onChange={update}
          />
        )}
      </section>

      <section aria-label="Check of the whole sheet">
        {/* The check's one live region (WCAG 4.1.3 Status Messages): always in the page, so each
            new sentence in it is announced, and neither inside nor around another live region, so
            it is said once (the section itself was aria-live too, and screen readers read the
            sentence twice: docs/accessibility-review.md). Problems (an alert) and notes (a status)
            are regions of their own beside it. */}
        <div role="status">
          {!checked?.ok ? (
            <p className="text-sm text-ink-muted">
              {columnsChosenTwice(draft).length > 0
                ? `${columnsChosenTwice(draft)
                    .map((twice) => describeColumnChosenTwice(twice, draft))
                    .join(' ')} The whole sheet is then checked.`
                : draft.timeColumn.trim() === '' || draft.valueColumn.trim() === ''
                  ? 'Choose at least the time column, its unit and the value column; the whole sheet is then checked.'
                  : 'Correct the mapping above (each problem is named beside its field); the whole sheet is then checked.'}
            </p>
          ) : !check ? (
            <p className="text-sm text-ink-muted">Checking the whole sheet…</p>
          ) : check.ok ? (
            <p className="rounded-sm border border-ledger/30 bg-ledger-light px-4 py-2 text-sm">
              {check.warnings.length === 0 ? 'The whole sheet reads cleanly' : 'The whole sheet can be read'}:{' '}
              {check.pointCount} points in {check.seriesCount} series
              {check.replicateRows.length > 0 &&
                `, ${check.replicateRows.length} rows are replicates (same time, same series)`}
              .
              {check.warnings.length > 0 &&
                ` Read the ${plural(check.warnings.length, 'note')} below before you import: the import is allowed, but a note may mean the mapping is wrong.`}
            </p>
          ) : null}
        </div>
        {check && !check.ok && (
          <ProblemList
            heading={`With this mapping the file has ${plural(check.problems.length, 'problem')} (marked in the table below); an import would store nothing:`}
            problems={check.problems}
          />
        )}
        {check && check.warnings.length > 0 && (
          <div className="mt-2">
            <ProblemList
              tone="note"
              heading="Notes (not errors; each says where and what to check):"
              problems={check.warnings}
            />
          </div>
        )}
      </section>

      <SheetPreviewTable
        sheet={sheet}
        headerRow={headerRow}
        roles={roles}
        replicateRows={replicateRows}
        problemCells={problemCells}
        noteCells={noteCells}
      />

      <section aria-label="Import" className="space-y-3 rounded-md border border-rule bg-white p-5">
        <label className="flex items-center gap-2 text-sm">
          <input
            type="checkbox"
            checked={saveWanted}
            onChange={(event) => setSaveWanted(event.target.checked)}
          />
          Save this mapping for the next workbook of the same layout, named
          <input
            aria-label="Mapping name"
            value={saveAs}
            onChange={(event) => {
              setSaveAs(event.target.value);
              setSaveWanted(event.target.value.trim() !== '');
            }}
            placeholder="e.g. Stability export, long-term"
            className="flex-1 rounded-sm border border-rule px-2 py-1"
          />
        </label>
        {refused && <ProblemList heading={refused.message} problems={refusedProblems} />}
        {refused?.status === 409 && checked?.ok && (
          <DuplicateImportReason
            pending={importer.isPending}
            onImport={(duplicateReason) =>
              importer.mutate({
                mapping: checked.mapping,
                ...(saveWanted && saveAs.trim() !== '' ? { saveMappingAs: saveAs.trim() } : {}),
                duplicateReason,
              })
            }
          />
        )}
        {importer.isError && !refused && (
          <p role="alert" className="text-sm text-alert">
            {importer.error.message}
          </p>
        )}
        <button
          type="button"
          onClick={submit}
          disabled={importer.isPending}
          className="rounded-sm bg-ledger px-4 py-2 font-semibold text-white hover:bg-ledger-dark disabled:opacity-60"
        >
          {importer.isPending ? 'Importing…' : 'Import as dataset'}
        </button>
        <p className="text-xs text-ink-muted">
          The import is all or nothing, recorded in the audit trail with the file's hash and this mapping.
        </p>
      </section>
    </div>
  );
}
