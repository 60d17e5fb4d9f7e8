import { KineticsError } from '../numeric/kinetics-error.ts';
import type { AttributeDirection, IntegerOrder, Series } from '../types.ts';
import { convertTime, tryParseTimeUnit } from '../units.ts';
import {
  type ConditionRole,
  conditionRole,
  type DeclaredChange,
  type Q1eDeclaration,
} from './q1e-declaration.ts';
import { q1eExtrapolationLimit } from './q1e-extrapolation-limit.ts';
import {
  allowanceOf,
  noAllowance,
  noProposal,
  proposedShelfLife,
  type Q1eProposal,
  snappedMonths,
} from './q1e-proposal.ts';
import type { Q1eShelfLife } from './q1e-shelf-life.ts';
import { scaledQ1eShelfLife } from './scaled-q1e-shelf-life.ts';
import { type SignificantChangeInData, significantChangeInData } from './significant-change-in-data.ts';
import type { StabilityBatch, StabilityTransform } from './stability-batch.ts';

/** The Q1E evaluation of one storage condition (one temperature of the data set). */
export interface ConditionShelfLife {
  temperatureC: number | null;
  /** The role the study declares for this condition; only 'long-term' proposes a shelf life. */
  role: ConditionRole;
  roleReason: string;
  seriesIds: string[];
  transform: StabilityTransform;
  transformReason: string;
  /** The statistical evaluation (ICH Q1E App. B); its `shelfLife` is the statistical estimate. */
  result: Q1eShelfLife | null;
  notApplicableReason: string | null;
  /** The proposed shelf life with the extrapolation limit it respects. */
  proposal: Q1eProposal;
}

/** One series of a condition, with the order its own analysis named (null when none or not analysed). */
export interface ConditionMember {
  series: Series;
  namedOrder: IntegerOrder | null;
}

export interface ConditionShelfLifeOptions {
  direction: AttributeDirection;
  lowerLimit?: number;
  upperLimit?: number;
  confidence: number;
  order?: IntegerOrder;
  declaration: Q1eDeclaration;
}

/** Significant change at accelerated counts within the first 6 months (ICH Q1A(R2) §2.2.7.1). */
const ACCELERATED_WINDOW_MONTHS = 6;
const ORDER_WORDS = ['zero', 'first', 'second'] as const;
const ORDER_SCALES: readonly StabilityTransform[] = ['none', 'ln', '1/x'];
const formatNumber = (value: number) => String(Number(value.toPrecision(4)));
const place = (temperatureC: number | null) => (temperatureC === null ? 'all series' : `${temperatureC} °C`);

function batchesOf(members: readonly ConditionMember[]): StabilityBatch[] {
  return members.map(({ series }) => ({
    batch: series.id,
    observations: series.observations
      .filter((observation) => !observation.excluded)
      .map(({ time, value }) => ({ time, value })),
  }));
}

function evaluate(members: readonly ConditionMember[], options: ConditionShelfLifeOptions) {
  const named = members.map((member) => member.namedOrder);
  let order: IntegerOrder = 0;
  let transformReason =
    'the reaction order was not named for every batch, so the values are regressed linearly on time (ICH Q1E default)';
  if (options.order !== undefined) {
    order = options.order;
    transformReason = `the analyst fixed ${ORDER_WORDS[order]} order`;
  } else if (named.every((value) => value !== null && value === named[0])) {
    order = named[0] as IntegerOrder;
    transformReason = `every batch of this condition named ${ORDER_WORDS[order]} order`;
  }
  const transform = ORDER_SCALES[order] as StabilityTransform;
  try {
    // Extreme magnitudes are evaluated scaled by powers of two and mapped back (issue 12 §6).
    const result = scaledQ1eShelfLife(batchesOf(members), {
      direction: options.direction,
      transform,
      confidence: options.confidence,
      ...(options.lowerLimit === undefined ? {} : { lowerLimit: options.lowerLimit }),
      ...(options.upperLimit === undefined ? {} : { upperLimit: options.upperLimit }),
    });
    return { transform, transformReason, result, notApplicableReason: null };
  } catch (error) {
    if (!(error instanceof KineticsError)) throw error;
    return { transform, transformReason, result: null, notApplicableReason: error.message };
  }
}

/** Why a condition has its role, as a sentence that begins with the condition. */
function roleReason(role: ConditionRole, temperatureC: number | null, declaration: Q1eDeclaration): string {
  const where = place(temperatureC);
  if (role === 'long-term')
    return `${where} is the long-term condition the study declares (its storage condition).`;
  if (role === 'accelerated' || role === 'intermediate') {
    return `${where} is the ${role} condition the study declares: its data support the kinetics and show whether significant change occurred, but a shelf life is proposed from long-term data only (ICH Q1E §2.3–2.5; ICH Q1A(R2) §2.2.7).`;
  }
  if (temperatureC === null) {
    return 'The series carry no storage temperature, so nothing shows that they are long-term data; map the temperature to propose a shelf life.';
  }
  return declaration.longTermTemperatureC === null
    ? `${where} is not a declared condition: the study declares no long-term condition (storage temperature), so no condition proposes a shelf life.`
    : `${where} is not declared as the long-term, intermediate or accelerated condition (long-term: ${declaration.longTermTemperatureC} °C); it is evaluated for information only.`;
}

/** The declared answer, overridden to 'significant' when the data of this attribute show it. */
function resolvedChange(
  declared: DeclaredChange,
  evidence: SignificantChangeInData | null,
  condition: string,
  findings: string[],
): DeclaredChange {
  if (!evidence?.shown) return declared;
  findings.push(...evidence.findings);
  if (declared === 'none') {
    findings.push(
      `No significant change at the ${condition} condition was declared, but the data of this attribute show one; the data prevail.`,
    );
  }
  return 'significant';
}

function longTermProposal(
  temperatureC: number | null,
  members: readonly ConditionMember[],
  evaluated: ReturnType<typeof evaluate>,
  evidence: { accelerated: SignificantChangeInData | null; intermediate: SignificantChangeInData | null },
  declaration: Q1eDeclaration,
): Q1eProposal {
  const unitText = members[0]?.series.timeUnit ?? '';
  const unit = tryParseTimeUnit(unitText);
  if (unit === null) {
    return noProposal(
      `The time unit "${unitText}" does not convert to months, so the period covered by long-term data and the whole-month rounding cannot be applied.`,
      noAllowance('time-unit-unknown', 'not evaluated'),
    );
  }
  const monthsPerTimeUnit = convertTime(1, unit, 'month');
  const spans = batchesOf(members)
    .filter((batch) => batch.observations.length > 0)
    .map(
      (batch) => Math.max(...batch.observations.map((observation) => observation.time)) * monthsPerTimeUnit,
    );
  const longTermMonths = spans.length === 0 ? 0 : snappedMonths(Math.min(...spans));
  if (!(longTermMonths > 0)) {
    return noProposal(
      'The long-term data cover no time after the first pull.',
      noAllowance('no-long-term-period', 'not evaluated'),
    );
  }
  const findings = [
    `X = ${formatNumber(longTermMonths)} months: the period covered by the long-term data at ${place(temperatureC)}.`,
  ];
  const spanAssumptions =
    Math.max(...spans) - Math.min(...spans) > 1e-9 * Math.max(...spans)
      ? [
          `The batches cover ${formatNumber(Math.min(...spans))} to ${formatNumber(snappedMonths(Math.max(...spans)))} months of long-term data; X is taken as the shortest (the conservative reading).`,
        ]
      : [];
  const acceleratedChange = resolvedChange(
    declaration.acceleratedChange,
    evidence.accelerated,
    'accelerated',
    findings,
  );
  const intermediateChange = resolvedChange(
    declaration.intermediateChange,
    evidence.intermediate,
    'intermediate',
    findings,
  );
  const firstMonth = evidence.accelerated?.shown ? evidence.accelerated.firstMonth : null;
  const limit = q1eExtrapolationLimit({
    storage: declaration.storage,
    longTermMonths,
    acceleratedChange,
    intermediateChange,
    littleChange: declaration.littleChange,
    statisticsPerformed: evaluated.result !== null,
    supportingData: declaration.supportingData,
    ...(firstMonth === null ? {} : { acceleratedChangeWithinThreeMonths: firstMonth <= 3 }),
    longTermTemperatureC: temperatureC,
  });
  const allowance = allowanceOf(limit, monthsPerTimeUnit, findings);
  allowance.assumptions = [...spanAssumptions, ...allowance.assumptions];
  if (evaluated.result === null) {
    return noProposal(
      `There is no statistical estimate to propose from: ${evaluated.notApplicableReason ?? 'not evaluated'}`,
      allowance,
    );
  }
  return proposedShelfLife(evaluated.result, allowance, monthsPerTimeUnit, unitText);
}

/**
 * The ICH Q1E evaluation of every storage condition of a data set: the statistical estimate per
 * temperature, the role the study declares for it, and for the long-term condition the proposed
 * shelf life under the Q1E extrapolation limit.
 *
 * Rules: the series of each temperature (one group when no temperature is known) are regressed on
 * the scale of the analyst's order, else of the order every batch named, else linearly (the Q1E
 * default). The role comes from the declaration (`conditionRole`). Only the long-term condition
 * proposes a shelf life; accelerated and intermediate conditions inform the significant-change
 * answers (the data of this attribute can show a significant change, within 6 months at
 * accelerated, never its absence) and every other condition is for information.
 *
 * Throws nothing: a condition that cannot be evaluated carries `notApplicableReason`.
 *
 * Example: 25 °C long-term with 9 months of data and an estimate of 34 months, room temperature,
 * no significant change at 40 °C declared, supporting data declared: proposed 18 months.
 */
export function conditionShelfLives(
  members: readonly ConditionMember[],
  options: ConditionShelfLifeOptions,
): ConditionShelfLife[] {
  const groups = new Map<number | null, ConditionMember[]>();
  for (const member of members) {
    const temperature = member.series.temperatureC ?? null;
    groups.set(temperature, [...(groups.get(temperature) ?? []), member]);
  }
  const conditions = [...groups].map(([temperatureC, group]) => ({
    temperatureC,
    group,
    role: conditionRole(options.declaration, temperatureC),
    evaluated: evaluate(group, options),
  }));
  const evidenceAt = (role: ConditionRole, windowMonths: number | null) => {
    const condition = conditions.find((candidate) => candidate.role === role);
    const unit = tryParseTimeUnit(condition?.group[0]?.series.timeUnit ?? '');
    if (!condition) return null;
    return significantChangeInData(batchesOf(condition.group), {
      direction: options.direction,
      ...(options.lowerLimit === undefined ? {} : { lowerLimit: options.lowerLimit }),
      ...(options.upperLimit === undefined ? {} : { upperLimit: options.upperLimit }),
      monthsPerTimeUnit: unit === null ? null : convertTime(1, unit, 'month'),
      windowMonths,
      conditionLabel: place(condition.temperatureC),
    });
  };
  const evidence = {
    accelerated: evidenceAt('accelerated', ACCELERATED_WINDOW_MONTHS),
    intermediate: evidenceAt('intermediate', null),
  };
  return conditions.map(({ temperatureC, group, role, evaluated }) => {
    const reason = roleReason(role, temperatureC, options.declaration);
    const proposal =
      role === 'long-term'
        ? longTermProposal(temperatureC, group, evaluated, evidence, options.declaration)
        : noProposal(
            reason,
            noAllowance(
              'not-long-term',
              'not applicable: only the long-term condition proposes a shelf life',
            ),
          );
    return {
      temperatureC,
      role,
      roleReason: reason,
      seriesIds: group.map(({ series }) => series.id),
      ...evaluated,
      proposal,
    };
  });
}
