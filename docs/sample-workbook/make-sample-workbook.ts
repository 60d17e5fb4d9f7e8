/**
 * Writes the sample workbook a new user uploads to try Rateledger: `orvellin-stability.xlsx`.
 *
 * Everything in it is invented. "Orvellin 250 mg film-coated tablets" and the batches OR-24xx are
 * fictional. Values are simulated from a first-order loss of assay, k(25 °C) = 0.0035 per month
 * and an activation energy of 90 kJ/mol (Arrhenius: k(T) = k(25 °C) · exp(−Ea/R · (1/T − 1/298.15))),
 * starting near 100.4 % of label claim, with Gaussian noise (SD 0.35 per result) from a fixed
 * seed, rounded to 0.1 %. They demonstrate the workflow; they are not expected results of a test.
 *
 * Usage: `npx tsx docs/sample-workbook/make-sample-workbook.ts` (rewrites the file identically).
 */
import path from 'node:path';
import ExcelJS from 'exceljs';

const GAS_CONSTANT = 8.314462618; // J/(mol·K), CODATA 2018
const K25_PER_MONTH = 0.0035;
const ACTIVATION_ENERGY = 90_000; // J/mol
const RESULT_SD = 0.35;

/** Park–Miller minimal standard generator: the same numbers on every run. */
function seededRandom(seed: number) {
  let state = seed;
  return () => {
    state = (state * 16807) % 2147483647;
    return state / 2147483647;
  };
}
const uniform = seededRandom(20_240_611);
function gaussian(): number {
  // Box–Muller transform.
  const u = Math.max(uniform(), 1e-12);
  const v = uniform();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

const rate = (celsius: number) =>
  K25_PER_MONTH * Math.exp((-ACTIVATION_ENERGY / GAS_CONSTANT) * (1 / (celsius + 273.15) - 1 / 298.15));

interface Condition {
  label: string;
  temperatureC: number;
  months: number[];
  batches: string[];
}

const CONDITIONS: Condition[] = [
  {
    label: '25 °C / 60 % RH (long term)',
    temperatureC: 25,
    months: [0, 3, 6, 9, 12, 18, 24],
    batches: ['OR-2401', 'OR-2402', 'OR-2403'],
  },
  {
    label: '40 °C / 75 % RH (accelerated)',
    temperatureC: 40,
    months: [0, 1, 2, 3, 6],
    batches: ['OR-2401', 'OR-2402', 'OR-2403'],
  },
  { label: '50 °C (stress)', temperatureC: 50, months: [0, 0.5, 1, 2, 3], batches: ['OR-2401'] },
  // The stress conditions run long enough (about 60 % and 80 % lost) for the order to be decidable.
  { label: '60 °C (stress)', temperatureC: 60, months: [0, 0.5, 1, 2, 3, 4, 6], batches: ['OR-2401'] },
  {
    label: '70 °C (stress)',
    temperatureC: 70,
    months: [0, 0.25, 0.5, 1, 1.5, 2, 3, 4],
    batches: ['OR-2401'],
  },
];
const INITIAL: Record<string, number> = { 'OR-2401': 100.4, 'OR-2402': 99.9, 'OR-2403': 100.7 };

const workbook = new ExcelJS.Workbook();
workbook.creator = 'Rateledger sample generator';
workbook.created = new Date(Date.UTC(2025, 0, 1));
workbook.modified = new Date(Date.UTC(2025, 0, 1));
const sheet = workbook.addWorksheet('Stability data');
sheet.columns = [
  { header: 'Batch', key: 'batch', width: 12 },
  { header: 'Storage condition', key: 'condition', width: 30 },
  { header: 'Temperature (°C)', key: 'temperature', width: 17 },
  { header: 'Month', key: 'month', width: 8 },
  { header: 'Assay (% label claim)', key: 'assay', width: 21 },
];
sheet.getRow(1).font = { bold: true };
for (const condition of CONDITIONS) {
  for (const batch of condition.batches) {
    for (const month of condition.months) {
      const expected = (INITIAL[batch] ?? 100) * Math.exp(-rate(condition.temperatureC) * month);
      const assay = Math.round((expected + RESULT_SD * gaussian()) * 10) / 10;
      sheet.addRow({ batch, condition: condition.label, temperature: condition.temperatureC, month, assay });
    }
  }
}
const about = workbook.addWorksheet('About');
about.getColumn(1).width = 100;
for (const line of [
  'Sample workbook for Rateledger. All data are invented: the product "Orvellin 250 mg film-coated tablets"',
  'and the batches OR-2401, OR-2402, OR-2403 are fictional, simulated from a first-order loss of assay.',
  'Map: time = Month (months), value = Assay (% label claim), batch = Batch, temperature = Temperature (°C).',
  'Estimates computed from these data support, but do not replace, qualified judgement and approved procedures.',
]) {
  about.addRow([line]);
}

const target = path.join(import.meta.dirname, 'orvellin-stability.xlsx');
await workbook.xlsx.writeFile(target);
console.log(`wrote ${target} (${sheet.rowCount - 1} results)`);
