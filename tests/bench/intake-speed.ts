/**
 * Intake speed and memory: a 100,000-row workbook from upload to stored dataset (and to stored
 * analysis when the analysis service is present): `npx tsx tests/bench/intake-speed.ts`.
 *
 * Builds the workbook in memory with exceljs (2 batches × 2 temperatures, 25,000 results each,
 * invented first-order data), then times, per repetition, the real service functions the routes
 * call: `storeUpload` (format check, full read, SHA-256, insert of the original + audit event),
 * `importUpload` (read again, `seriesFromGrid`, insert of the dataset + audit event) and, when
 * `server/services/analysis-runs.ts` exports `runAnalysis`, the analysis run. Needs DATABASE_URL
 * (migrations are applied; a throwaway organisation is created); without it, only reading and
 * mapping are timed and the database part is skipped with a message.
 *
 * Targets (issue 4): median upload-to-stored-analysis under 5 s; peak resident memory under 500 MB
 * (the kernel's maximum RSS of this process, which includes building the workbook, and the
 * highest `process.memoryUsage().rss` sampled during the pipeline). Exits 1 on a missed target.
 */
import { randomBytes } from 'node:crypto';
import { resourceUsage } from 'node:process';
import ExcelJS from 'exceljs';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import type { SessionUser } from '../../server/auth/roles.ts';
import { openDatabase } from '../../server/db/client.ts';
import { applyMigrations } from '../../server/db/migrate.ts';
import { memberships, organisations, studies, users } from '../../server/db/schema/index.ts';
import { importUpload } from '../../server/services/datasets.ts';
import { readUploadedSheets, storeUpload } from '../../server/services/uploads.ts';

const ROWS = 100_000;
const REPETITIONS = 3;
const TARGET_SECONDS = 5;
const TARGET_RSS_MB = 500;
const MB = 1024 * 1024;

let peakSampled = process.memoryUsage().rss;
const sample = () => {
  peakSampled = Math.max(peakSampled, process.memoryUsage().rss);
};
const sampler = setInterval(sample, 10);

/** Park–Miller generator with Box–Muller noise: the same workbook on every run. */
let seed = 4_242;
const uniform = () => {
  seed = (seed * 16807) % 2147483647;
  return seed / 2147483647;
};
const noise = () => Math.sqrt(-2 * Math.log(Math.max(uniform(), 1e-12))) * Math.cos(2 * Math.PI * uniform());

async function buildWorkbook(): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  const sheet = book.addWorksheet('Stability data');
  sheet.addRow(['Batch', 'Temperature (°C)', 'Month', 'Assay (% label claim)']);
  const groups = [
    ['BX-01', 25, 0.004],
    ['BX-02', 25, 0.004],
    ['BX-01', 40, 0.03],
    ['BX-02', 40, 0.03],
  ] as const;
  const perGroup = ROWS / groups.length;
  for (const [batch, temperature, rate] of groups) {
    for (let index = 0; index < perGroup; index += 1) {
      const month = Math.round((index / perGroup) * 24 * 100) / 100;
      const assay = Math.round((100 * Math.exp(-rate * month) + 0.3 * noise()) * 100) / 100;
      sheet.addRow([batch, temperature, month, assay]);
    }
  }
  return Buffer.from(await book.xlsx.writeBuffer());
}

const median = (values: number[]) => {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[middle]! : (sorted[middle - 1]! + sorted[middle]!) / 2;
};
const seconds = (start: bigint) => Number(process.hrtime.bigint() - start) / 1e9;
const format = (value: number) => `${value.toFixed(2)} s`;

const mapping = columnMappingSchema.parse({
  sheet: 'Stability data',
  timeColumn: 'Month',
  timeUnit: 'month',
  valueColumn: 'Assay (% label claim)',
  seriesColumn: 'Batch',
  temperatureColumn: 'Temperature (°C)',
});

const built = process.hrtime.bigint();
const bytes = await buildWorkbook();
console.log(`workbook: ${ROWS.toLocaleString('en')} rows, ${(bytes.length / MB).toFixed(1)} MB, built in ${format(seconds(built))}`);

const readTimes: number[] = [];
const mapTimes: number[] = [];
for (let repetition = 0; repetition < REPETITIONS; repetition += 1) {
  const read = process.hrtime.bigint();
  const sheets = await readUploadedSheets(bytes, 'xlsx', 'bench.xlsx');
  readTimes.push(seconds(read));
  const mapped = process.hrtime.bigint();
  const result = seriesFromGrid(sheets, mapping);
  mapTimes.push(seconds(mapped));
  if (!result.ok) throw new Error(`the bench workbook did not map: ${result.problems[0]?.text}`);
  sample();
}
console.log(`read workbook (readWorkbook): median ${format(median(readTimes))}`);
console.log(`map columns (seriesFromGrid): median ${format(median(mapTimes))}`);

const failures: string[] = [];
const url = process.env.DATABASE_URL;
if (!url) {
  console.log('DATABASE_URL is not set: the upload → stored dataset → stored analysis part is SKIPPED (only reading and mapping were timed).');
} else {
  await applyMigrations(url);
  const database = openDatabase(url);
  try {
    const tag = randomBytes(4).toString('hex');
    const [organisation] = await database.db.insert(organisations).values({ slug: `bench-${tag}`, name: `Bench ${tag}` }).returning();
    const [user] = await database.db
      .insert(users)
      .values({ email: `bench.${tag}@bench.example`, fullName: 'Bench analyst', passwordHash: 'not-a-login' })
      .returning();
    await database.db.insert(memberships).values({ userId: user!.id, organisationId: organisation!.id, role: 'analyst' });
    const actor: SessionUser = {
      id: user!.id,
      email: user!.email,
      fullName: user!.fullName,
      organisationId: organisation!.id,
      organisationName: organisation!.name,
      roles: ['analyst'],
    };
    const [study] = await database.db
      .insert(studies)
      .values({
        organisationId: organisation!.id,
        title: 'Intake bench',
        product: 'Benchmark product (invented)',
        attribute: 'Assay',
        unit: '% label claim',
        direction: 'decreasing',
        lowerLimit: 90,
        storageTemperatureC: 25,
        createdBy: user!.id,
      })
      .returning();
    const analysisModule = (await import('../../server/services/analysis-runs.ts').catch(() => null)) as {
      runAnalysis?: (db: unknown, input: unknown) => Promise<{ runId: number }>;
    } | null;
    const runAnalysis = analysisModule?.runAnalysis;
    if (!runAnalysis) console.log('server/services/analysis-runs.ts exports no runAnalysis: timing upload → stored dataset only.');

    const phases = { store: [] as number[], import: [] as number[], analyse: [] as number[], total: [] as number[] };
    for (let repetition = 0; repetition < REPETITIONS; repetition += 1) {
      const start = process.hrtime.bigint();
      const upload = await storeUpload(database.db, actor, study!.id, { fileName: 'bench.xlsx', mediaType: 'application/octet-stream', bytes }, {});
      phases.store.push(seconds(start));
      sample();
      const imported = process.hrtime.bigint();
      const dataset = await importUpload(database.db, actor, upload.id, mapping, undefined, {});
      phases.import.push(seconds(imported));
      sample();
      if (dataset.pointCount !== ROWS) throw new Error(`expected ${ROWS} points, stored ${dataset.pointCount}`);
      if (runAnalysis) {
        const analysed = process.hrtime.bigint();
        await runAnalysis(database.db, {
          organisationId: organisation!.id,
          datasetId: dataset.datasetId,
          actor: { userId: user!.id, label: user!.email },
        });
        phases.analyse.push(seconds(analysed));
        sample();
      }
      phases.total.push(seconds(start));
    }
    console.log(`store upload (check, read, hash, insert): median ${format(median(phases.store))}`);
    console.log(`import (read, map, insert dataset):      median ${format(median(phases.import))}`);
    if (runAnalysis) console.log(`run and store analysis:                   median ${format(median(phases.analyse))}`);
    const total = median(phases.total);
    const what = runAnalysis ? 'upload → stored analysis' : 'upload → stored dataset (no analysis service)';
    const verdict = total < TARGET_SECONDS ? 'PASS' : 'FAIL';
    console.log(`${what}: median ${format(total)} (runs: ${phases.total.map(format).join(', ')}) — target < ${TARGET_SECONDS} s: ${verdict}`);
    if (verdict === 'FAIL') failures.push('time');
  } finally {
    await database.close();
  }
}

clearInterval(sampler);
sample();
const maxRssMb = resourceUsage().maxRSS / 1024;
const sampledMb = peakSampled / MB;
const memoryVerdict = Math.max(maxRssMb, sampledMb) < TARGET_RSS_MB ? 'PASS' : 'FAIL';
console.log(
  `peak RSS: ${maxRssMb.toFixed(0)} MB (kernel maximum), ${sampledMb.toFixed(0)} MB (highest sample) — target < ${TARGET_RSS_MB} MB: ${memoryVerdict}`,
);
if (memoryVerdict === 'FAIL') failures.push('memory');
process.exit(failures.length === 0 ? 0 : 1);
