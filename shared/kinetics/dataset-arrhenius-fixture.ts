import type { DatasetOptions } from './dataset-analysis.ts';
import type { Series } from './types.ts';

/**
 * Data sets for the tests of the Arrhenius step (`dataset-arrhenius.test.ts`), all invented and
 * built from the Arrhenius law k = A·exp(−Ea/(R·T)) (IUPAC Gold Book, "Arrhenius equation",
 * doi 10.1351/goldbook.A00446; OpenStax Chemistry 2e §12.5), so that the true Ea and ln A are known.
 *
 * - `formationSeries`: a degradation product growing at a constant rate (zero-order formation,
 *   C = C0 + k_f·t, exact unless a scatter is asked for), two batches at each of 25, 30, 40 and
 *   50 °C, 0–12 months.
 * - `LOSS_CASES`: the data sets whose results must not move when a rising attribute gains an
 *   Arrhenius fit (stored before that change in `__snapshots__/dataset-arrhenius-before.json`):
 *   a first-order assay loss at four temperatures with a little alternating scatter, analysed
 *   with direction 'decreasing', with no direction, with 'either' (both limits) and with the
 *   order fixed at 2.
 */

/** R = N_A·k_B, J/(mol·K), exact since the 2019 SI (as `temperature/physical-constants.ts`). */
const GAS_CONSTANT = 8.31446261815324;

export const FORMATION_TEMPERATURES_C = [25, 30, 40, 50] as const;
/** Formation law of the invented degradant: Ea = 90 kJ/mol, k_f(25 °C) = 0.05 % per month. */
export const FORMATION_EA = 90e3;
export const FORMATION_LN_A = Math.log(0.05) + FORMATION_EA / (GAS_CONSTANT * 298.15);

/** k_f = A·exp(−Ea/(R·T)) in % per month at θ °C. */
export function formationRate(temperatureC: number, ea = FORMATION_EA, lnA = FORMATION_LN_A): number {
  return Math.exp(lnA - ea / (GAS_CONSTANT * (temperatureC + 273.15)));
}

/** The series; `scatter` adds ±scatter to the values by a fixed pattern (0: exact). */
export function formationSeries(scatter = 0, ea = FORMATION_EA, lnA = FORMATION_LN_A): Series[] {
  return FORMATION_TEMPERATURES_C.flatMap((temperatureC, t) =>
    ['DG-01', 'DG-02'].map((batch, index) => ({
      id: `${batch} @ ${temperatureC} °C`,
      batch,
      temperatureC,
      timeUnit: 'month',
      valueUnit: '%',
      observations: [0, 1, 2, 3, 6, 9, 12].map((time, step) => ({
        time,
        value:
          0.05 +
          0.01 * index +
          formationRate(temperatureC, ea, lnA) * time +
          scatter * [1, -1, 0, -1, 1, 0, 1][(step + 2 * t + index) % 7]!,
      })),
    })),
  );
}

/** First-order assay loss, Ea = 95 kJ/mol, k(25 °C) = 0.004 per month, ±0.05 % alternating. */
function lossSeries(): Series[] {
  return [25, 30, 40, 50].flatMap((temperatureC) =>
    ['AS-01', 'AS-02'].map((batch, index) => {
      const k = 0.004 * Math.exp((-95e3 / GAS_CONSTANT) * (1 / (temperatureC + 273.15) - 1 / 298.15));
      return {
        id: `${batch} @ ${temperatureC} °C`,
        batch,
        temperatureC,
        timeUnit: 'month',
        valueUnit: '% of label claim',
        observations: [0, 1, 2, 3, 6, 9, 12, 18, 24].map((time, step) => ({
          time,
          value: (100 + index * 0.3) * Math.exp(-k * time) + ((step + index) % 2 === 0 ? 0.05 : -0.05),
        })),
      };
    }),
  );
}

export const LOSS_CASES: { name: string; series: Series[]; options: DatasetOptions }[] = [
  {
    name: 'decreasing',
    series: lossSeries(),
    options: { direction: 'decreasing', lowerLimit: 95, storageTemperatureC: 25 },
  },
  { name: 'no direction', series: lossSeries(), options: { lowerLimit: 95, storageTemperatureC: 25 } },
  {
    name: 'either',
    series: lossSeries(),
    options: { direction: 'either', lowerLimit: 95, upperLimit: 105, storageTemperatureC: 25 },
  },
  {
    name: 'decreasing, second order fixed',
    series: lossSeries(),
    options: { direction: 'decreasing', lowerLimit: 95, storageTemperatureC: 30, order: 2 },
  },
];
