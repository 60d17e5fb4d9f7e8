import type { DatasetAnalysis, SeriesResult } from '../kinetics/analyse-dataset.ts';
import type { DerivedFigure } from '../kinetics/derived/model-summary.ts';
import type { RateLawModel } from '../kinetics/order/fit-rate-law.ts';
import { rateWords } from './arrhenius-rate-words.ts';
import { eyringRows, plausibleRows, q10Rows } from './plausible-and-eyring-rows.ts';
import type { ResultRow } from './result-row.ts';

/**
 * The results of an analysis as one tidy table: one row per reported number, with its interval,
 * unit and the number of significant figures it is shown with. The analysis screen, the CSV and
 * the workbook's "Results" sheet are all written from these rows, so a number reads the same in
 * each (the screen rounds with `formatSignificant(row.estimate, row.digits)`; the files keep the
 * full double).
 *
 * Each row has a stable `key` ("rate-law|BF-01 @ 25 °C|1|k") by which tests and reports find it.
 *
 * Throws nothing; a quantity that is not estimable has estimate null and its reason in `note`.
 *
 * Example: a series fitted by the first-order law with k = 6.213e-4 1/s gives the row
 * `{ section: 'rate-law', seriesId, model: '1', quantity: 'k', estimate: 6.213e-4, unit: '1/s', digits: 4 }`.
 */

export type { ResultRow, ResultSection } from './result-row.ts';

/** Significant figures per kind of number (common practice: 3–4 for estimates, 4 for R²). */
export const DIGITS = { estimate: 4, time: 3, criterion: 4, weight: 3, rSquared: 4, energy: 4 } as const;

export const MODEL_NAMES: Record<string, string> = {
  '0': 'zero order',
  '1': 'first order',
  '2': 'second order',
  n: 'free order n',
};

const POOLING_WORDS: Record<string, string> = {
  'single-series': 'one series',
  'inverse-variance-mean-of-ln-k': 'batches pooled: inverse-variance weighted mean of ln k',
  'mean-of-ln-k': 'batches pooled: mean of ln k',
};

type RowInput = Omit<ResultRow, 'key' | 'lower' | 'upper' | 'note'> & {
  interval?: readonly [number, number] | null;
  note?: string;
};

function row(input: RowInput): ResultRow {
  const { interval, note, ...rest } = input;
  return {
    ...rest,
    key: [input.section, input.seriesId ?? '*', input.model ?? '-', input.quantity].join('|'),
    lower: interval?.[0] ?? null,
    upper: interval?.[1] ?? null,
    note: note ?? '',
  };
}

function seriesRows(result: SeriesResult): ResultRow[] {
  const analysis = result.analysis;
  const where = { seriesId: result.id, batch: result.batch, temperatureC: result.temperatureC };
  if (!analysis) return [];
  const rows: ResultRow[] = [];
  const reported = analysis.reportedOrder === null ? null : String(analysis.reportedOrder);
  for (const model of analysis.models) {
    const name = String(model.order as RateLawModel);
    const base = { ...where, section: 'rate-law' as const, model: name };
    const note = model.applicable
      ? name === reported
        ? 'reported order'
        : ''
      : (model.reason ?? 'not fitted');
    rows.push(
      row({
        ...base,
        quantity: 'k',
        label: 'Rate constant k',
        estimate: model.k,
        interval: model.kCi95,
        unit: model.kUnit,
        digits: DIGITS.estimate,
        note,
      }),
      row({
        ...base,
        quantity: 'c0',
        label: 'Initial value C0',
        estimate: model.c0,
        interval: model.c0Ci95,
        unit: analysis.valueUnit,
        digits: DIGITS.estimate,
      }),
    );
    if (name === 'n') {
      rows.push(
        row({
          ...base,
          quantity: 'n',
          label: 'Order n',
          estimate: model.n ?? null,
          interval: model.nCi95 ?? null,
          unit: '',
          digits: 3,
        }),
      );
    }
    rows.push(
      row({
        ...base,
        quantity: 'aicc',
        label: 'AICc',
        estimate: model.aicc,
        unit: '',
        digits: DIGITS.criterion,
      }),
      row({
        ...base,
        quantity: 'weight',
        label: 'Akaike weight',
        estimate: model.weight,
        unit: '',
        digits: DIGITS.weight,
      }),
      row({
        ...base,
        quantity: 'residual-sd',
        label: 'Residual SD',
        estimate: model.residualStandardDeviation,
        unit: analysis.errorModel === 'proportional' ? 'ln units' : analysis.valueUnit,
        digits: 3,
      }),
    );
  }
  const derived = (quantity: string, label: string, figure: DerivedFigure | null | undefined) => {
    if (figure === undefined) return;
    const note =
      figure === null
        ? (analysis.derivedReason ?? 'not estimable')
        : [figure.beyondObservedTime ? 'beyond the observed time (extrapolated)' : '', figure.reason ?? '']
            .filter(Boolean)
            .join('; ');
    rows.push(
      row({
        ...where,
        section: 'derived',
        model: reported,
        quantity,
        label,
        estimate: figure?.estimate ?? null,
        interval: figure?.ci95 ?? null,
        unit: figure?.unit ?? analysis.timeUnit,
        digits: DIGITS.time,
        note,
      }),
    );
  };
  derived('half-life', 'Half-life', analysis.halfLife);
  derived('t90', 't90 (10 % loss)', analysis.t90);
  derived('time-to-lower-limit', 'Time to the lower limit', analysis.timeToLimit?.lower);
  derived('time-to-upper-limit', 'Time to the upper limit', analysis.timeToLimit?.upper);
  for (const line of analysis.linearized) {
    const base = {
      ...where,
      section: 'linearised' as const,
      model: line.transform,
      note: line.applicable ? '' : (line.reason ?? ''),
    };
    rows.push(
      row({
        ...base,
        quantity: 'r-squared',
        label: `R² of ${line.transform} against time`,
        estimate: line.rSquared,
        unit: '',
        digits: DIGITS.rSquared,
      }),
    );
  }
  return rows;
}

export function resultRows(analysis: DatasetAnalysis): ResultRow[] {
  const rows = analysis.series.flatMap((result) => [...seriesRows(result), ...plausibleRows(result)]);
  const none = { seriesId: null, batch: null, temperatureC: null };
  const arrhenius = analysis.arrhenius;
  if (arrhenius?.fit) {
    const fit = arrhenius.fit;
    const rate = rateWords(arrhenius);
    const kilo = (value: number | null | undefined) =>
      value === null || value === undefined ? null : value / 1000;
    const energyInterval = fit.activationEnergyInterval
      ? ([kilo(fit.activationEnergyInterval[0])!, kilo(fit.activationEnergyInterval[1])!] as const)
      : null;
    const base = {
      ...none,
      section: 'arrhenius' as const,
      model: arrhenius.order === null ? null : String(arrhenius.order),
    };
    rows.push(
      row({
        ...base,
        quantity: 'activation-energy',
        label: 'Activation energy Ea',
        estimate: kilo(fit.activationEnergy),
        interval: energyInterval,
        unit: 'kJ/mol',
        digits: DIGITS.energy,
        note: fit.intervalUnavailableReason ?? '',
      }),
      row({
        ...base,
        quantity: 'ln-a',
        label: 'ln A',
        estimate: fit.lnPreExponentialFactor,
        interval: fit.lnPreExponentialFactorInterval,
        unit: `ln(${arrhenius.kUnit ?? 'k'})`,
        digits: DIGITS.estimate,
      }),
      row({
        ...base,
        quantity: 'r-squared',
        label: `R² of ${rate.ln} against 1/T`,
        estimate: fit.rSquared,
        unit: '',
        digits: DIGITS.rSquared,
      }),
    );
    rows.push(...eyringRows(arrhenius), ...q10Rows(arrhenius));
    for (const point of arrhenius.rateConstants) {
      rows.push(
        row({
          ...base,
          temperatureC: point.temperatureC,
          quantity: `k-at-${point.temperatureC}C`,
          label: `${rate.label} at ${point.temperatureC} °C (${point.seriesIds.length} series)`,
          estimate: point.k,
          unit: arrhenius.kUnit ?? '',
          digits: DIGITS.estimate,
          note: (POOLING_WORDS[point.pooling] ?? point.pooling).replaceAll('ln k', rate.ln),
        }),
      );
    }
    const prediction = arrhenius.prediction;
    if (prediction) {
      const at = { ...base, temperatureC: prediction.temperatureC };
      const note =
        prediction.extrapolation === null
          ? ''
          : `extrapolated (${prediction.extrapolation.replaceAll('-', ' ')})`;
      rows.push(
        row({
          ...at,
          quantity: 'predicted-k',
          label: `${rate.label} predicted at ${prediction.temperatureC} °C`,
          estimate: prediction.rateConstant,
          interval: prediction.confidenceInterval,
          unit: arrhenius.kUnit ?? '',
          digits: DIGITS.estimate,
          note,
        }),
      );
      const timeUnit = analysis.series.find((result) => result.analysis)?.analysis?.timeUnit ?? '';
      if (prediction.t90)
        rows.push(
          row({
            ...at,
            quantity: 'predicted-t90',
            label: `t90 at ${prediction.temperatureC} °C`,
            estimate: prediction.t90.estimate,
            interval: prediction.t90.ci,
            unit: timeUnit,
            digits: DIGITS.time,
            note,
          }),
        );
      if (prediction.halfLife)
        rows.push(
          row({
            ...at,
            quantity: 'predicted-half-life',
            label: `Half-life at ${prediction.temperatureC} °C`,
            estimate: prediction.halfLife.estimate,
            interval: prediction.halfLife.ci,
            unit: timeUnit,
            digits: DIGITS.time,
            note,
          }),
        );
    }
  }
  for (const condition of analysis.shelfLife ?? []) {
    const id = condition.temperatureC === null ? 'all' : `${condition.temperatureC}C`;
    const timeUnit =
      analysis.series.find((result) => condition.seriesIds.includes(result.id))?.analysis?.timeUnit ?? '';
    const base = {
      ...none,
      temperatureC: condition.temperatureC,
      section: 'shelf-life' as const,
      model: condition.transform,
    };
    const result = condition.result;
    rows.push(
      row({
        ...base,
        quantity: `shelf-life-${id}`,
        label: `Q1E shelf life${condition.temperatureC === null ? '' : ` at ${condition.temperatureC} °C`}`,
        estimate: result?.shelfLife ?? null,
        unit: timeUnit,
        digits: DIGITS.time,
        note: result ? `${result.model}; ${result.reason}` : (condition.notApplicableReason ?? ''),
      }),
    );
  }
  return rows;
}
