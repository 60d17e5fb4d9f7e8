import type { AttributeChoice, AttributeDraft, MappingLayout, MoreValueDraft } from '../attribute-draft.ts';
import type { ColumnOption } from '../mapping-draft.ts';
import { Field, inputClass } from './mapping-fields.tsx';

interface Props {
  draft: AttributeDraft & { valueColumn: string };
  errors: Record<string, string>;
  columns: ColumnOption[];
  attributes: readonly AttributeChoice[];
  onChange: (patch: Partial<AttributeDraft>) => void;
}

/** Form field key ("moreValueColumns.0.column") → element id ("map-moreValueColumns-0-column"). */
const fieldId = (field: string) => `map-${field.replaceAll('.', '-')}`;

const LAYOUTS: { value: Exclude<MappingLayout, 'one'>; label: string; hint: string }[] = [
  { value: 'wide', label: 'One column per attribute', hint: 'e.g. columns “Assay”, “Impurity B”, “Water”' },
  {
    value: 'long',
    label: 'A column naming the attribute',
    hint: 'e.g. a column “Test” beside one “Result” column',
  },
];

/**
 * For a study of several attributes: the sheet's layout, and which study attribute each value
 * column measures (or which column names the attribute of each row). Each error sits under its
 * field and is tied to it with aria-invalid and aria-describedby, as in `MappingFields`.
 */
export function AttributeFields({ draft, errors, columns, attributes, onChange }: Props) {
  const aria = (field: string) =>
    errors[field] ? { 'aria-invalid': true, 'aria-describedby': `${fieldId(field)}-error` } : {};
  const unitOf = (name: string) => attributes.find((attribute) => attribute.name === name)?.unit ?? '';
  const valueColumnLabel =
    columns.find((option) => option.value === draft.valueColumn)?.label ?? 'the value column';
  const setMore = (index: number, patch: Partial<MoreValueDraft>) =>
    onChange({
      moreValueColumns: draft.moreValueColumns.map((entry, at) =>
        at === index ? { ...entry, ...patch } : entry,
      ),
    });
  const attributeSelect = (field: string, value: string, onSelect: (name: string) => void) => (
    <select
      id={fieldId(field)}
      value={value}
      onChange={(event) => onSelect(event.target.value)}
      className={inputClass(errors[field])}
      {...aria(field)}
    >
      <option value="">— choose an attribute —</option>
      {attributes.map((attribute) => (
        <option key={attribute.name} value={attribute.name}>
          {attribute.name} ({attribute.unit})
        </option>
      ))}
    </select>
  );
  const columnSelect = (field: string, value: string, onSelect: (column: string) => void) => (
    <select
      id={fieldId(field)}
      value={value}
      onChange={(event) => onSelect(event.target.value)}
      className={inputClass(errors[field])}
      {...aria(field)}
    >
      <option value="">— choose a column —</option>
      {columns.map((option) => (
        <option key={option.value + option.label} value={option.value}>
          {option.label}
        </option>
      ))}
    </select>
  );
  const used = new Set([draft.valueAttribute, ...draft.moreValueColumns.map((entry) => entry.attribute)]);
  const nextAttribute = attributes.find((attribute) => !used.has(attribute.name));

  return (
    <fieldset className="mt-6 space-y-4 border-t border-rule pt-4">
      <legend className="text-sm font-semibold">Attributes in this sheet</legend>
      <div role="radiogroup" aria-label="Layout of the attributes" className="flex flex-wrap gap-6 text-sm">
        {LAYOUTS.map((layout) => (
          <label key={layout.value} className="flex items-start gap-2">
            <input
              type="radio"
              name="map-layout"
              value={layout.value}
              checked={draft.layout === layout.value}
              onChange={() => onChange({ layout: layout.value })}
              className="mt-1"
            />
            <span>
              {layout.label}
              <span className="block text-xs text-ink-muted">{layout.hint}</span>
            </span>
          </label>
        ))}
      </div>
      {draft.layout === 'long' ? (
        <div className="grid gap-4 md:grid-cols-3">
          <Field
            id={fieldId('attributeColumn')}
            label="Attribute column"
            error={errors.attributeColumn}
            hint={`Each row's value is in ${valueColumnLabel}; this column says which attribute it is.`}
          >
            {columnSelect('attributeColumn', draft.attributeColumn, (attributeColumn) =>
              onChange({ attributeColumn }),
            )}
          </Field>
        </div>
      ) : (
        <div className="space-y-3">
          <div className="grid gap-4 md:grid-cols-3">
            <Field
              id={fieldId('valueAttribute')}
              label={`Attribute of the value column (${valueColumnLabel})`}
              error={errors.valueAttribute}
            >
              {attributeSelect('valueAttribute', draft.valueAttribute, (valueAttribute) =>
                onChange({ valueAttribute }),
              )}
            </Field>
          </div>
          {draft.moreValueColumns.map((entry, index) => {
            const prefix = `moreValueColumns.${index}`;
            const number = index + 2;
            return (
              // biome-ignore lint/suspicious/noArrayIndexKey: rows are edited in place; the index is their identity
              <div key={index} className="grid items-end gap-4 md:grid-cols-4">
                <Field
                  id={fieldId(`${prefix}.column`)}
                  label={`Value column ${number}`}
                  error={errors[`${prefix}.column`]}
                >
                  {columnSelect(`${prefix}.column`, entry.column, (column) => setMore(index, { column }))}
                </Field>
                <Field
                  id={fieldId(`${prefix}.attribute`)}
                  label={`Attribute of value column ${number}`}
                  error={errors[`${prefix}.attribute`]}
                >
                  {attributeSelect(`${prefix}.attribute`, entry.attribute, (attribute) =>
                    setMore(index, {
                      attribute,
                      // The study's unit for the attribute, unless the analyst typed another.
                      ...(entry.unit === '' || entry.unit === unitOf(entry.attribute)
                        ? { unit: unitOf(attribute) }
                        : {}),
                    }),
                  )}
                </Field>
                <Field
                  id={fieldId(`${prefix}.unit`)}
                  label={`Unit of value column ${number}`}
                  error={errors[`${prefix}.unit`]}
                >
                  <input
                    id={fieldId(`${prefix}.unit`)}
                    value={entry.unit}
                    onChange={(event) => setMore(index, { unit: event.target.value })}
                    className={inputClass(errors[`${prefix}.unit`])}
                    {...aria(`${prefix}.unit`)}
                  />
                </Field>
                <div>
                  <button
                    type="button"
                    onClick={() =>
                      onChange({ moreValueColumns: draft.moreValueColumns.filter((_, at) => at !== index) })
                    }
                    className="rounded-sm border border-rule px-3 py-1.5 text-sm hover:bg-paper"
                  >
                    Remove value column {number}
                  </button>
                </div>
              </div>
            );
          })}
          <button
            type="button"
            onClick={() =>
              onChange({
                moreValueColumns: [
                  ...draft.moreValueColumns,
                  { column: '', attribute: nextAttribute?.name ?? '', unit: nextAttribute?.unit ?? '' },
                ],
              })
            }
            className="rounded-sm border border-ledger px-3 py-1.5 text-sm font-semibold text-ledger hover:bg-ledger-light"
          >
            Add a value column
          </button>
        </div>
      )}
    </fieldset>
  );
}
