import type { DatasetArrhenius, SeriesResult } from '../kinetics/dataset-analysis.ts';
import type { DerivedFigure } from '../kinetics/derived/model-summary.ts';
import type { ModelAveragedFigure } from '../kinetics/model-averaging.ts';
import type { ResultRow } from './result-row.ts';

/**
 * Result rows beside the core table (`results-table.ts`), so the screen, the CSV, the workbook and
 * the report read them from the same place:
 * - `plausible` rows: for a series whose order the data do not name, each plausible law's k,
 *   half-life, t90 and time to a limit with their intervals (model '0', '1', '2', 'n'), and the
 *   model-averaged t90 and time to a limit (model 'average', noted "model-averaged, unconditional
 *   interval (Burnham & Anderson 2002 §4.3)"). k is never averaged (its unit differs by order).
 * - Eyring rows in the `arrhenius` section: ΔH‡ (kJ/mol) and ΔS‡ (J/(mol·K)) with intervals
 *   (H. Eyring, J. Chem. Phys. 3 (1935) 107), and the Q10 over θ → θ + 10 °C implied by Ea
 *   (van 't Hoff 1884), θ the storage temperature or else the lowest tested one.
 *
 * Throws nothing.
 *
 * Example: a series with first and second order plausible gives rows keyed
 * "plausible|A|1|k", "plausible|A|2|t90", …, "plausible|A|average|t90".
 */

type RowInput = Omit<ResultRow, 'key' | 'lower' | 'upper' | 'note'> & {
  interval?: readonly [number, number] | null;
  note?: string;
};

const TIME_DIGITS = 3;
const ESTIMATE_DIGITS = 4;

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

const AVERAGE_NOTE = 'model-averaged, unconditional interval (Burnham & Anderson 2002 §4.3, eq. 4.9)';

/** The rows of each plausible law and the model averages, for a series whose order is not named. */
export function plausibleRows(result: SeriesResult): ResultRow[] {
  const plausible = result.analysis?.plausible;
  if (!result.analysis || !plausible) return [];
  const timeUnit = result.analysis.timeUnit;
  const where = {
    seriesId: result.id,
    batch: result.batch,
    temperatureC: result.temperatureC,
    section: 'plausible' as const,
  };
  const rows: ResultRow[] = [];
  const time = (model: string, quantity: string, label: string, figure: DerivedFigure | null | undefined) => {
    if (figure === undefined) return;
    rows.push(
      row({
        ...where,
        model,
        quantity,
        label,
        estimate: figure?.estimate ?? null,
        interval: figure?.ci95 ?? null,
        unit: figure?.unit ?? timeUnit,
        digits: TIME_DIGITS,
        note: figure?.reason ?? (figure === null ? 'not estimable' : ''),
      }),
    );
  };
  for (const law of plausible.laws) {
    const model = String(law.model);
    const weight = law.weight === null ? '—' : law.weight.toFixed(3);
    rows.push(
      row({
        ...where,
        model,
        quantity: 'k',
        label: 'Rate constant k',
        estimate: law.k,
        interval: law.kCi95,
        unit: law.kUnit,
        digits: ESTIMATE_DIGITS,
        note: `plausible law: Akaike weight ${weight}, ΔAICc ${law.deltaAicc === null ? '—' : law.deltaAicc.toFixed(2)}`,
      }),
    );
    time(model, 'half-life', 'Half-life', law.halfLife);
    time(model, 't90', 't90 (10 % loss)', law.t90);
    time(model, 'time-to-lower-limit', 'Time to the lower limit', law.timeToLimit?.lower);
    time(model, 'time-to-upper-limit', 'Time to the upper limit', law.timeToLimit?.upper);
  }
  const averaged = (quantity: string, label: string, figure: ModelAveragedFigure | undefined) => {
    if (!figure) return;
    const range = figure.range
      ? `; range over the laws ${figure.range.map((value) => value.toPrecision(TIME_DIGITS)).join('–')}`
      : '';
    rows.push(
      row({
        ...where,
        model: 'average',
        quantity,
        label: `${label}, model-averaged`,
        estimate: figure.estimate,
        interval: figure.interval,
        unit: timeUnit,
        digits: TIME_DIGITS,
        note: figure.estimate === null ? (figure.reason ?? 'not averaged') : `${AVERAGE_NOTE}${range}`,
      }),
    );
  };
  averaged('t90', 't90 (10 % loss)', plausible.modelAveraged.t90);
  averaged('time-to-lower-limit', 'Time to the lower limit', plausible.modelAveraged.timeToLimit?.lower);
  averaged('time-to-upper-limit', 'Time to the upper limit', plausible.modelAveraged.timeToLimit?.upper);
  return rows;
}

/** ΔH‡ and ΔS‡ of the Eyring line through the Arrhenius rate constants. */
export function eyringRows(arrhenius: DatasetArrhenius): ResultRow[] {
  const fit = arrhenius.eyring?.fit;
  if (!fit) return [];
  const base = {
    seriesId: null,
    batch: null,
    temperatureC: null,
    section: 'arrhenius' as const,
    model: arrhenius.order === null ? null : String(arrhenius.order),
  };
  const kilo = (pair: [number, number] | null) =>
    pair === null ? null : ([pair[0] / 1000, pair[1] / 1000] as const);
  const note = fit.intervalUnavailableReason ?? 'Eyring (1935), transmission coefficient 1';
  return [
    row({
      ...base,
      quantity: 'enthalpy-of-activation',
      label: 'Enthalpy of activation ΔH‡ (Eyring)',
      estimate: fit.enthalpyOfActivation.estimate / 1000,
      interval: kilo(fit.enthalpyOfActivation.interval),
      unit: 'kJ/mol',
      digits: ESTIMATE_DIGITS,
      note,
    }),
    row({
      ...base,
      quantity: 'entropy-of-activation',
      label: 'Entropy of activation ΔS‡ (Eyring)',
      estimate: fit.entropyOfActivation.estimate,
      interval: fit.entropyOfActivation.interval,
      unit: 'J/(mol·K)',
      digits: ESTIMATE_DIGITS,
      note,
    }),
  ];
}

/** Q10 implied by Ea over fromC → fromC + 10 °C, with the interval carried from Ea's. */
export function q10Rows(arrhenius: DatasetArrhenius): ResultRow[] {
  const q10 = arrhenius.q10;
  if (!q10) return [];
  return [
    row({
      seriesId: null,
      batch: null,
      temperatureC: q10.fromC,
      section: 'arrhenius',
      model: arrhenius.order === null ? null : String(arrhenius.order),
      quantity: 'q10',
      label: `Q10 over ${q10.fromC} → ${q10.toC} °C (from Ea)`,
      estimate: q10.estimate,
      interval: q10.interval,
      unit: '',
      digits: 3,
      note:
        q10.interval === null ? (arrhenius.fit?.intervalUnavailableReason ?? '') : 'from the interval of Ea',
    }),
  ];
}
