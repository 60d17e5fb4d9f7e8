import { studentTQuantile } from '../numeric/student-t-quantile.ts';
import { transformedStraightLine } from '../order/transformed-straight-line.ts';
import type { Observation, Series } from '../types.ts';
import { type StudyAttribute, seriesOfAttribute } from './study-attributes.ts';
import type { MassBalance, MassBalancePoint, MassBalanceSeries } from './study-shelf-life-types.ts';

/**
 * The mass-balance check of a study that measures its assay and its degradation products: does
 * what the assay loses reappear as degradation products, or does the total fall (a degradant not
 * measured, a response-factor difference, a volatile product)?
 *
 * Formula, per batch and condition, at each pull time where the assay and every degradation
 * product have a usable result (replicates at one time are averaged): total = assay + Σ degradants;
 * percentOfInitial = 100 · total / total(first such pull). The trend is the least-squares slope of
 * percentOfInitial on time, with the two-sided interval slope ± t(1 − α/2; n − 2) · se(slope),
 * se(slope) = s/√Sₜₜ, s² = RSS/(n − 2), when there are at least 3 pulls; a slope whose interval
 * holds 0 shows no trend in the balance.
 *
 * Usable results: a point the analyst excluded is left out (its pull then lacks that attribute).
 * A result reported below a limit ("<LOQ") counts at the attribute's censored rule: its stated
 * value under 'stated-value', 0 under 'exclude' (the least it can be; the statement says so).
 *
 * References: ICH Q1A(R2) glossary, "Mass balance" (the adding together of assay and levels of
 * degradation products to see how closely these add up to 100 % of the initial value; wording from
 * memory); the slope
 * interval as in NIST/SEMATECH e-Handbook §4.1.4.1 (straight-line regression,
 * https://www.itl.nist.gov/div898/handbook/pmd/section1/pmd141.htm).
 *
 * Returns null when the study marks no assay or no degradation product (no check is asked for);
 * a record with no series and a statement saying why when the check cannot be made (two assays,
 * different units). Throws nothing.
 *
 * Example: assay 100, 99, 98, 97 and one degradant 0, 0.9, 2.1, 2.9 at months 0, 3, 6, 9 give
 * totals 100, 99.9, 100.1, 99.9, i.e. 100, 99.9, 100.1, 99.9 % of initial, slope −0.15/45 = −0.003333 %
 * per month.
 */
export function massBalance(
  series: readonly Series[],
  attributes: readonly StudyAttribute[],
  confidenceLevel = 0.95,
): MassBalance | null {
  const assays = attributes.filter((attribute) => attribute.massBalanceRole === 'assay');
  const degradants = attributes.filter((attribute) => attribute.massBalanceRole === 'degradant');
  if (assays.length === 0 || degradants.length === 0) return null;
  const assay = assays[0]!;
  const assaySeries = seriesOfAttribute(series, attributes, assay);
  const timeUnit = assaySeries[0]?.timeUnit ?? '';
  const base = {
    assayAttribute: assay.name,
    degradantAttributes: degradants.map((attribute) => attribute.name),
    unit: assay.unit,
    timeUnit,
  };
  const refusal = (why: string): MassBalance => ({
    ...base,
    series: [],
    statement: `Mass balance not checked: ${why}`,
  });
  if (assays.length > 1) {
    return refusal(
      `${assays.map((attribute) => attribute.name).join(', ')} are all marked as the assay; mark one.`,
    );
  }
  const otherUnit = degradants.find((attribute) => attribute.unit.trim() !== assay.unit.trim());
  if (otherUnit) {
    return refusal(
      `${otherUnit.name} is in ${otherUnit.unit} and ${assay.name} in ${assay.unit}; a mass balance adds them, so they must share a unit.`,
    );
  }
  const degradantSeries = degradants.map((attribute) => seriesOfAttribute(series, attributes, attribute));
  const results: MassBalanceSeries[] = [];
  const skipped: string[] = [];
  for (const assayEntry of assaySeries) {
    const key = conditionKey(assayEntry);
    const where = placeOf(assayEntry);
    const matches = degradantSeries.map((list) => list.filter((entry) => conditionKey(entry) === key));
    const absent = degradants.filter((_, index) => matches[index]!.length === 0);
    if (absent.length > 0) {
      skipped.push(`${where} (${absent.map((attribute) => attribute.name).join(', ')} not measured)`);
      continue;
    }
    if (matches.some((list) => list.some((entry) => entry.timeUnit !== assayEntry.timeUnit))) {
      skipped.push(`${where} (time units differ)`);
      continue;
    }
    const assayPulls = pullMeans([assayEntry], assay);
    const degradantPulls = matches.map((list, index) => pullMeans(list, degradants[index]!));
    const times = [...assayPulls.keys()]
      .filter((time) => degradantPulls.every((pulls) => pulls.has(time)))
      .sort((a, b) => a - b);
    const totals = times.map((time) => {
      const assayValue = assayPulls.get(time)!;
      const degradantValue = degradantPulls.reduce((sum, pulls) => sum + pulls.get(time)!, 0);
      return { time, assay: assayValue, degradants: degradantValue, total: assayValue + degradantValue };
    });
    const initial = totals[0]?.total;
    if (initial === undefined || !(initial !== 0 && Number.isFinite(initial))) {
      skipped.push(
        `${where} (${initial === undefined ? 'no pull where all were measured' : 'initial total is 0'})`,
      );
      continue;
    }
    const points: MassBalancePoint[] = totals.map((entry) => ({
      ...entry,
      percentOfInitial: (100 * entry.total) / initial,
    }));
    results.push({
      batch: assayEntry.batch ?? null,
      temperatureC: assayEntry.temperatureC ?? null,
      points,
      trend: trendOf(points, confidenceLevel),
    });
  }
  return {
    ...base,
    series: results,
    statement: statementOf(base, results, skipped, degradants, series, attributes, confidenceLevel),
  };
}

/** Batch and condition, the pair a degradant series must share with its assay series. */
function conditionKey(entry: Series): string {
  return `${entry.batch ?? ''}\u0000${entry.temperatureC ?? ''}`;
}

function placeOf(entry: { batch?: string | null; temperatureC?: number | null }): string {
  const batch = entry.batch ?? 'all batches';
  return entry.temperatureC === undefined || entry.temperatureC === null
    ? batch
    : `${batch} at ${entry.temperatureC} °C`;
}

/** The value a point contributes to the balance, or null when it contributes nothing. */
function balanceValue(observation: Observation, attribute: StudyAttribute): number | null {
  if (observation.excluded) return null;
  if (!observation.censored) return observation.value;
  if (attribute.censoredRule === 'stated-value' && attribute.censoredValue !== null)
    return attribute.censoredValue;
  return 0;
}

/** Mean usable value at each time of these series (replicates averaged). */
function pullMeans(list: readonly Series[], attribute: StudyAttribute): Map<number, number> {
  const sums = new Map<number, { sum: number; count: number }>();
  for (const entry of list) {
    for (const observation of entry.observations) {
      const value = balanceValue(observation, attribute);
      if (value === null) continue;
      const current = sums.get(observation.time) ?? { sum: 0, count: 0 };
      sums.set(observation.time, { sum: current.sum + value, count: current.count + 1 });
    }
  }
  return new Map([...sums].map(([time, { sum, count }]) => [time, sum / count]));
}

function trendOf(points: readonly MassBalancePoint[], confidenceLevel: number): MassBalanceSeries['trend'] {
  if (points.length < 3) return null;
  const line = transformedStraightLine(
    points.map((point) => point.time),
    points.map((point) => point.percentOfInitial),
    'value',
  );
  const t = studentTQuantile(1 - (1 - confidenceLevel) / 2, points.length - 2);
  const half = t * line.slopeStandardError;
  return { slope: line.slope, lower: line.slope - half, upper: line.slope + half, confidenceLevel };
}

const formatNumber = (value: number) => String(Number(value.toPrecision(4)));

/** "18 months", "1 month", "30 d": a time in the data's unit (abbreviations are not pluralised). */
function timeText(value: number, unit: string): string {
  const plural = value === 1 || /s$/i.test(unit) || unit.length <= 2 ? unit : `${unit}s`;
  return `${formatNumber(value)} ${plural}`.trim();
}

function statementOf(
  base: { assayAttribute: string; degradantAttributes: string[]; unit: string; timeUnit: string },
  results: readonly MassBalanceSeries[],
  skipped: readonly string[],
  degradants: readonly StudyAttribute[],
  series: readonly Series[],
  attributes: readonly StudyAttribute[],
  confidenceLevel: number,
): string {
  const level = `${Number((confidenceLevel * 100).toPrecision(4))} %`;
  const per = results.map((entry) => {
    const last = entry.points[entry.points.length - 1]!;
    const trend = entry.trend
      ? `slope ${formatNumber(entry.trend.slope)} % per ${base.timeUnit} (${level} CI ${formatNumber(entry.trend.lower)} to ${formatNumber(entry.trend.upper)})`
      : 'no trend (fewer than 3 pulls)';
    return `${placeOf(entry)}: ${formatNumber(last.percentOfInitial)} % of initial at ${timeText(last.time, base.timeUnit)}, ${trend}`;
  });
  const censored = degradants.flatMap((attribute) => {
    const count = seriesOfAttribute(series, attributes, attribute).reduce(
      (sum, entry) => sum + entry.observations.filter((point) => point.censored && !point.excluded).length,
      0,
    );
    if (count === 0) return [];
    return attribute.censoredRule === 'stated-value' && attribute.censoredValue !== null
      ? [
          `${attribute.name}'s results below the limit count at the stated value ${attribute.censoredValue} ${attribute.unit}`,
        ]
      : [
          `${attribute.name}'s results below the limit count as 0 (the study excludes them from its fit; 0 is the least they can be)`,
        ];
  });
  return [
    `Mass balance: ${base.assayAttribute} plus ${base.degradantAttributes.join(', ')} (${base.unit}), per batch and condition at the pulls where all were measured (replicates averaged), as a percentage of the first such pull; trend = least-squares slope with its two-sided ${level} confidence interval (t on n − 2 degrees of freedom, at least 3 pulls).`,
    per.length === 0 ? 'No batch and condition has every attribute measured.' : `${per.join('; ')}.`,
    skipped.length === 0 ? '' : `Not checked: ${skipped.join('; ')}.`,
    censored.length === 0 ? '' : `${censored.join('; ')}.`,
  ]
    .filter((part) => part !== '')
    .join(' ');
}
