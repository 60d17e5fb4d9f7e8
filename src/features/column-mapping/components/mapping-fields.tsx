import type { ReactNode } from 'react';
import { TIME_UNITS } from '../../../../shared/kinetics/units.ts';
import type { ColumnOption, MappingDraft } from '../mapping-draft.ts';

const TIME_UNIT_LABELS: Record<string, string> = {
  s: 'seconds',
  min: 'minutes',
  h: 'hours',
  d: 'days',
  week: 'weeks',
  month: 'months',
  year: 'years',
};

export const inputClass = (error?: string) =>
  `mt-1 block w-full rounded-sm border px-2 py-1.5 text-sm focus:border-ledger ${error ? 'border-alert' : 'border-rule'}`;

export function Field({
  id,
  label,
  error,
  hint,
  children,
}: {
  id: string;
  label: string;
  error?: string | undefined;
  hint?: string;
  children: ReactNode;
}) {
  return (
    <div>
      <label htmlFor={id} className="text-sm font-semibold">
        {label}
      </label>
      {children}
      {error ? (
        <p id={`${id}-error`} className="mt-1 text-sm text-alert">
          {error}
        </p>
      ) : hint ? (
        <p className="mt-1 text-xs text-ink-muted">{hint}</p>
      ) : null}
    </div>
  );
}

type ColumnField = 'timeColumn' | 'valueColumn' | 'seriesColumn' | 'temperatureColumn' | 'replicateColumn';

interface Props {
  draft: MappingDraft;
  errors: Record<string, string>;
  sheetNames: string[];
  columns: ColumnOption[];
  onChange: (patch: Partial<MappingDraft>) => void;
}

/** The mapping form's fields; each error appears under its field. */
export function MappingFields({ draft, errors, sheetNames, columns, onChange }: Props) {
  const aria = (field: string) =>
    errors[field] ? { 'aria-invalid': true, 'aria-describedby': `map-${field}-error` } : {};
  const columnSelect = (field: ColumnField, optional: boolean) => (
    <select
      id={`map-${field}`}
      value={draft[field]}
      onChange={(event) => onChange({ [field]: event.target.value })}
      className={inputClass(errors[field])}
      {...aria(field)}
    >
      <option value="">{optional ? '— none —' : '— choose a column —'}</option>
      {columns.map((option) => (
        <option key={option.value + option.label} value={option.value}>
          {option.label}
        </option>
      ))}
    </select>
  );
  return (
    <div className="grid gap-4 md:grid-cols-3">
      <Field id="map-sheet" label="Sheet" error={errors.sheet}>
        <select
          id="map-sheet"
          value={draft.sheet}
          onChange={(event) => onChange({ sheet: event.target.value })}
          className={inputClass(errors.sheet)}
        >
          {sheetNames.map((name) => (
            <option key={name} value={name}>
              {name}
            </option>
          ))}
        </select>
      </Field>
      <Field
        id="map-headerRow"
        label="Header row"
        error={errors.headerRow}
        hint="Row number of the column headings; 0 if there are none."
      >
        <input
          id="map-headerRow"
          inputMode="numeric"
          value={draft.headerRow}
          onChange={(event) => onChange({ headerRow: event.target.value })}
          className={inputClass(errors.headerRow)}
          {...aria('headerRow')}
        />
      </Field>
      <div />
      <Field id="map-timeColumn" label="Time column" error={errors.timeColumn}>
        {columnSelect('timeColumn', false)}
      </Field>
      <Field id="map-timeFormat" label="Time format" error={errors.timeFormat}>
        <select
          id="map-timeFormat"
          value={draft.timeFormat}
          onChange={(event) => onChange({ timeFormat: event.target.value as MappingDraft['timeFormat'] })}
          className={inputClass()}
        >
          <option value="elapsed">elapsed time (numbers)</option>
          <option value="datetime">dates or date-times</option>
        </select>
      </Field>
      <Field
        id="map-timeUnit"
        label={draft.timeFormat === 'datetime' ? 'Elapsed time in' : 'Unit of time'}
        error={errors.timeUnit}
        hint={draft.timeFormat === 'datetime' ? 'Counted from the first sample of each series.' : undefined}
      >
        <select
          id="map-timeUnit"
          value={draft.timeUnit}
          onChange={(event) => onChange({ timeUnit: event.target.value })}
          className={inputClass(errors.timeUnit)}
          {...aria('timeUnit')}
        >
          <option value="">— choose —</option>
          {TIME_UNITS.map((unit) => (
            <option key={unit} value={unit}>
              {TIME_UNIT_LABELS[unit] ?? unit}
            </option>
          ))}
        </select>
      </Field>
      <Field id="map-valueColumn" label="Value column" error={errors.valueColumn}>
        {columnSelect('valueColumn', false)}
      </Field>
      <Field id="map-valueUnit" label="Unit of the values" error={errors.valueUnit}>
        <input
          id="map-valueUnit"
          value={draft.valueUnit}
          onChange={(event) => onChange({ valueUnit: event.target.value })}
          className={inputClass(errors.valueUnit)}
          {...aria('valueUnit')}
        />
      </Field>
      <Field
        id="map-seriesColumn"
        label="Batch column (optional)"
        error={errors.seriesColumn}
        hint="Rows of different batches form different series."
      >
        {columnSelect('seriesColumn', true)}
      </Field>
      <Field
        id="map-temperatureColumn"
        label="Temperature column (optional)"
        error={errors.temperatureColumn}
      >
        {columnSelect('temperatureColumn', true)}
      </Field>
      <Field id="map-temperatureUnit" label="Temperatures in" error={errors.temperatureUnit}>
        <select
          id="map-temperatureUnit"
          value={draft.temperatureUnit}
          onChange={(event) => onChange({ temperatureUnit: event.target.value as 'C' | 'K' })}
          className={inputClass()}
        >
          <option value="C">°C</option>
          <option value="K">K</option>
        </select>
      </Field>
      <Field
        id="map-replicateColumn"
        label="Replicate column (optional)"
        error={errors.replicateColumn}
        hint="Rows at one time are replicates either way; this column labels them."
      >
        {columnSelect('replicateColumn', true)}
      </Field>
    </div>
  );
}
