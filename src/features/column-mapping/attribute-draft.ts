/**
 * The attribute part of the mapping form (issue 15 §1): for a study of several attributes, the
 * analyst picks the sheet's layout — one value column per attribute ('wide'), or a column naming
 * the attribute of each row ('long') — and matches each value column to a study attribute. A study
 * of one attribute keeps today's form ('one': the mapping names no attribute).
 *
 * Pure, like `mapping-draft.ts`, which joins this part to the rest of the draft.
 */
import type { ColumnMappingInput } from '../../../shared/intake/column-mapping.ts';
import { sameAttributeName } from '../../../shared/kinetics/stability/study-attributes.ts';

/** A study attribute as the page gives it to the island. */
export interface AttributeChoice {
  name: string;
  unit: string;
}

/** A further value column of the wide layout, as typed. */
export interface MoreValueDraft {
  column: string;
  attribute: string;
  unit: string;
}

export type MappingLayout = 'one' | 'wide' | 'long';

export interface AttributeDraft {
  layout: MappingLayout;
  /** Wide layout: the attribute of the (first) value column. */
  valueAttribute: string;
  moreValueColumns: MoreValueDraft[];
  /** Long layout: the column naming each row's attribute. */
  attributeColumn: string;
}

export const NO_ATTRIBUTES: AttributeDraft = {
  layout: 'one',
  valueAttribute: '',
  moreValueColumns: [],
  attributeColumn: '',
};

/** Reads the island's `data-attributes` (JSON); an empty list when missing or malformed. */
export function parseAttributeChoices(raw: string | undefined): AttributeChoice[] {
  if (!raw) return [];
  try {
    const value: unknown = JSON.parse(raw);
    if (!Array.isArray(value)) return [];
    return value.flatMap((entry) =>
      entry && typeof entry.name === 'string' && typeof entry.unit === 'string'
        ? [{ name: entry.name, unit: entry.unit }]
        : [],
    );
  } catch {
    return [];
  }
}

const normalise = (text: string) => text.trim().replace(/\s+/g, ' ').toLowerCase();
/** A header without a unit in brackets: "Impurity B (%)" → "impurity b". */
const headerName = (header: string) => normalise(header.replace(/\s*[([][^()[\]]*[)\]]\s*$/, ''));

/**
 * A first guess for a study of several attributes: the wide layout, the value column matched to
 * the attribute its header names (else the first attribute), and a further value column for each
 * other attribute whose name is a header of the sheet. `taken` holds the columns of other roles.
 */
export function guessAttributeDraft(
  headers: readonly string[],
  columnValues: readonly string[],
  valueColumn: string,
  attributes: readonly AttributeChoice[],
  taken: ReadonlySet<string>,
): AttributeDraft {
  if (attributes.length < 2) return NO_ATTRIBUTES;
  const columnOfAttribute = (attribute: AttributeChoice) => {
    const index = headers.findIndex((header) => headerName(header) === normalise(attribute.name));
    return index < 0 ? undefined : columnValues[index];
  };
  const first =
    attributes.find((attribute) => columnOfAttribute(attribute) === valueColumn) ?? attributes[0]!;
  const moreValueColumns: MoreValueDraft[] = [];
  for (const attribute of attributes) {
    if (attribute === first) continue;
    const column = columnOfAttribute(attribute);
    if (column === undefined || column === valueColumn || taken.has(column)) continue;
    moreValueColumns.push({ column, attribute: attribute.name, unit: attribute.unit });
  }
  return { layout: 'wide', valueAttribute: first.name, moreValueColumns, attributeColumn: '' };
}

/** The mapping fields of the attribute part, as the shared schema reads them. */
export function attributeMappingInput(draft: AttributeDraft): Partial<ColumnMappingInput> {
  const optional = (text: string) => (text.trim() === '' ? undefined : text);
  if (draft.layout === 'long') return { attributeColumn: draft.attributeColumn };
  if (draft.layout === 'wide') {
    return {
      valueAttribute: draft.valueAttribute,
      ...(draft.moreValueColumns.length > 0
        ? {
            moreValueColumns: draft.moreValueColumns.map((entry) => ({
              column: entry.column,
              attribute: entry.attribute,
              unit: optional(entry.unit),
            })),
          }
        : {}),
    };
  }
  return {};
}

/** The attribute part of a stored mapping, back in the form. */
export function attributeDraftFromMapping(mapping: ColumnMappingInput): AttributeDraft {
  if (mapping.attributeColumn !== undefined)
    return { ...NO_ATTRIBUTES, layout: 'long', attributeColumn: mapping.attributeColumn };
  if (mapping.valueAttribute === undefined) return NO_ATTRIBUTES;
  return {
    layout: 'wide',
    valueAttribute: mapping.valueAttribute,
    moreValueColumns: (mapping.moreValueColumns ?? []).map((entry) => ({
      column: entry.column,
      attribute: entry.attribute,
      unit: entry.unit ?? '',
    })),
    attributeColumn: '',
  };
}

/** The columns the attribute part chooses, keyed by form field, for the one-role-per-column check. */
export function attributeColumnFields(draft: AttributeDraft): [string, string][] {
  if (draft.layout === 'long') return [['attributeColumn', draft.attributeColumn]];
  if (draft.layout === 'wide')
    return draft.moreValueColumns.map((entry, index) => [`moreValueColumns.${index}.column`, entry.column]);
  return [];
}

/** What a field of the attribute part is called in a sentence. */
export function attributeFieldLabel(field: string, draft: AttributeDraft): string | undefined {
  if (field === 'attributeColumn') return 'attribute column';
  const match = /^moreValueColumns\.(\d+)\.column$/.exec(field);
  if (!match) return undefined;
  const attribute = draft.moreValueColumns[Number(match[1])]?.attribute ?? '';
  return attribute === '' ? `value column ${Number(match[1]) + 2}` : `value column of ${attribute}`;
}

/** Errors the schema cannot give: what the chosen layout still lacks. */
export function attributeDraftErrors(
  draft: AttributeDraft,
  attributes: readonly AttributeChoice[],
): Record<string, string> {
  const errors: Record<string, string> = {};
  const known = (name: string) => attributes.some((attribute) => sameAttributeName(attribute.name, name));
  if (draft.layout === 'long' && draft.attributeColumn.trim() === '')
    errors.attributeColumn = 'Choose the column that names the attribute of each row.';
  if (draft.layout === 'wide') {
    if (draft.valueAttribute.trim() === '')
      errors.valueAttribute = 'Choose the attribute this value column measures.';
    else if (attributes.length > 0 && !known(draft.valueAttribute))
      errors.valueAttribute = `“${draft.valueAttribute}” is not an attribute of this study.`;
    draft.moreValueColumns.forEach((entry, index) => {
      if (entry.column.trim() === '')
        errors[`moreValueColumns.${index}.column`] = 'Choose the column, or remove this row.';
      if (entry.attribute.trim() === '')
        errors[`moreValueColumns.${index}.attribute`] = 'Choose the attribute this column measures.';
    });
  }
  return errors;
}
