/**
 * What changed in a study's further attributes between two versions, in words for the version
 * history and for the note an analysis shows when its study changed since ("Impurity B: upper
 * limit 0.5 → 1"). Attributes are matched by name (case and surrounding spaces ignored), so a
 * removed or added attribute reads as such rather than as every later attribute changing.
 *
 * Values compare by content, not by the order of their keys: PostgreSQL's jsonb gives an
 * object's keys back in its own order, so text comparison would see a change in every save.
 */
import {
  type StudyAttribute,
  sameAttributeName,
} from '../../../shared/kinetics/stability/study-attributes.ts';

/** JSON with every object's keys sorted, so equal content gives equal text. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value ?? null, (_key, entry: unknown) =>
    entry !== null && typeof entry === 'object' && !Array.isArray(entry)
      ? Object.fromEntries(
          Object.entries(entry as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : 1)),
        )
      : entry,
  );
}

export function sameStudyValue(a: unknown, b: unknown): boolean {
  return canonicalJson(a) === canonicalJson(b);
}

/** How each field of an attribute reads in a sentence. */
export const ATTRIBUTE_FIELD_LABELS: Record<keyof StudyAttribute, string> = {
  name: 'name',
  unit: 'unit',
  direction: 'direction',
  lowerLimit: 'lower limit',
  upperLimit: 'upper limit',
  workingOrder: 'working order',
  workingOrderReason: 'reason for the working order',
  censoredRule: 'rule for results below the limit',
  censoredValue: 'stated value for results below the limit',
  massBalanceRole: 'mass-balance role',
};

const ATTRIBUTE_FIELDS = Object.keys(ATTRIBUTE_FIELD_LABELS) as (keyof StudyAttribute)[];

export interface AttributeChange {
  label: string;
  before: unknown;
  after: unknown;
}

/** The acceptance criterion in words: "≤ 0.5 % area", "95–105 %". */
export function criterionText(lower: number | null, upper: number | null, unit: string): string {
  if (lower !== null && upper !== null) return `${lower}–${upper} ${unit}`;
  if (lower !== null) return `≥ ${lower} ${unit}`;
  if (upper !== null) return `≤ ${upper} ${unit}`;
  return 'none';
}

/** One attribute in a few words, for an attribute added or removed. */
export function attributeSummary(attribute: StudyAttribute): string {
  return `${attribute.name} (${attribute.direction}, ${criterionText(attribute.lowerLimit, attribute.upperLimit, attribute.unit)})`;
}

function asList(value: unknown): StudyAttribute[] {
  return Array.isArray(value) ? (value as StudyAttribute[]) : [];
}

/** The changes between two lists of further attributes, in the order of the later list. */
export function attributeListChanges(beforeValue: unknown, afterValue: unknown): AttributeChange[] {
  const before = asList(beforeValue);
  const after = asList(afterValue);
  const changes: AttributeChange[] = [];
  const matched: StudyAttribute[] = [];
  for (const attribute of after) {
    const previous = before.find((candidate) => sameAttributeName(candidate.name, attribute.name));
    if (!previous) {
      changes.push({ label: 'attribute added', before: null, after: attributeSummary(attribute) });
      continue;
    }
    matched.push(previous);
    for (const field of ATTRIBUTE_FIELDS) {
      if (!sameStudyValue(previous[field], attribute[field])) {
        changes.push({
          label: `${attribute.name}: ${ATTRIBUTE_FIELD_LABELS[field]}`,
          before: previous[field],
          after: attribute[field],
        });
      }
    }
  }
  for (const attribute of before) {
    if (!after.some((candidate) => sameAttributeName(candidate.name, attribute.name))) {
      changes.push({ label: 'attribute removed', before: attributeSummary(attribute), after: null });
    }
  }
  const keptOrder = before
    .filter((attribute) => matched.includes(attribute))
    .map((attribute) => attribute.name);
  const newOrder = matched.map((attribute) => attribute.name);
  if (keptOrder.join('\u0000') !== newOrder.join('\u0000')) {
    changes.push({ label: 'order of the attributes', before: keptOrder, after: newOrder });
  }
  return changes;
}
