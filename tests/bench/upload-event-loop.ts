/**
 * Uploads must not stall the server: while eight large uploads run at once, `/healthz` answers
 * within 200 ms (issue 14 §3). `npx tsx tests/bench/upload-event-loop.ts` with DATABASE_URL set
 * (a migrated database; `npm run bench` provides one).
 *
 * The real app listens on a local port; an analyst signs in through the form; then, for each
 * kind of file, eight uploads are sent at once through HTTP while `/healthz` is asked every
 * 25 ms, and the slowest answer is the figure. Kinds: a 10 MB CSV on one line (the attack of the
 * issue: refused by the line limit), a 100,000-row CSV and a 100,000-row workbook (both
 * accepted and stored). For comparison only, the eight 100,000-row CSVs are then read on the
 * main thread, as uploads were read before the parse worker, to show what the probe catches.
 * The server process's event-loop delay (perf_hooks) is printed beside each figure: a slow
 * `/healthz` with a small delay is a busy machine (or PostgreSQL), not a blocked event loop.
 *
 * Prints each kind's slowest and median `/healthz` time and PASS or FAIL against 200 ms; exits 1
 * when a kind misses it. Wall-clock figures: on a busy machine rerun before concluding anything.
 */
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import ExcelJS from 'exceljs';
import request from 'supertest';

const CONCURRENT = 8;
const TARGET_MS = 200;
const PROBE_INTERVAL_MS = 25;
const ROWS = 100_000;

// One log line per request would bury the figures; the logger reads this when first imported.
process.env.LOG_LEVEL ??= 'warn';
const { readUpload } = await import('../../server/features/intake/readers/read-upload.ts');
const { studies } = await import('../../server/platform/db/schema/index.ts');
const { createTestWorld, csrfFrom } = await import('../support/test-app.ts');

if (!process.env.DATABASE_URL) {
  console.error('upload-event-loop: set DATABASE_URL to a migrated database (npm run bench does).');
  process.exit(2);
}

function stabilityRows(): (string | number)[][] {
  const rows: (string | number)[][] = [['Batch', 'Temperature (°C)', 'Month', 'Assay (%)', 'Analyst']];
  for (let index = 0; index < ROWS; index += 1) {
    const month = index % 36;
    rows.push([
      `VZ-${index % 4}`,
      25 + (index % 2) * 15,
      month,
      100 - 0.1 * month + (index % 7) * 0.01,
      'QX',
    ]);
  }
  return rows;
}

async function workbookBytes(rows: (string | number)[][]): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  book.addWorksheet('Stability data').addRows(rows);
  return Buffer.from(await book.xlsx.writeBuffer());
}

interface Probe {
  stop(): Promise<number[]>;
}

/** Asks `/healthz` every PROBE_INTERVAL_MS (one request at a time) until stopped; the times taken. */
function probeHealth(base: string): Probe {
  const times: number[] = [];
  let running = true;
  const loop = (async () => {
    while (running) {
      const started = performance.now();
      const response = await fetch(`${base}/healthz`);
      await response.arrayBuffer();
      times.push(performance.now() - started);
      await new Promise((resolve) => setTimeout(resolve, PROBE_INTERVAL_MS));
    }
  })();
  return {
    stop: async () => {
      running = false;
      await loop;
      return times;
    },
  };
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] ?? 0;

async function main() {
  const world = await createTestWorld({ analyst: ['analyst'] });
  const [study] = await world.database.db
    .insert(studies)
    .values({
      organisationId: world.organisationId,
      title: 'Upload event-loop bench',
      product: 'Veltrazine (invented)',
      attribute: 'Assay',
      unit: '%',
      direction: 'decreasing',
      lowerLimit: 95,
      createdBy: world.users.analyst!.id,
    })
    .returning();
  const server = createServer(world.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const agent = request.agent(base);
  const signInPage = await agent.get('/signin');
  await agent
    .post('/signin')
    .type('form')
    .send({
      _csrf: csrfFrom(signInPage.text),
      email: world.users.analyst!.email,
      password: world.users.analyst!.password,
    });
  const token = csrfFrom((await agent.get('/')).text);

  const rows = stabilityRows();
  const kinds: { name: string; fileName: string; bytes: Buffer; status: number }[] = [
    {
      name: '10 MB CSV on one line',
      fileName: 'one-line.csv',
      bytes: Buffer.from(`Month,Assay,${'9,'.repeat(5_000_000)}\n`),
      status: 422,
    },
    {
      name: `${ROWS.toLocaleString('en-GB')}-row CSV`,
      fileName: 'rows.csv',
      bytes: Buffer.from(rows.map((row) => row.join(',')).join('\n')),
      status: 201,
    },
    {
      name: `${ROWS.toLocaleString('en-GB')}-row workbook`,
      fileName: 'rows.xlsx',
      bytes: await workbookBytes(rows),
      status: 201,
    },
  ];

  // A first upload starts the parse worker, as the first upload after a start does.
  await agent
    .post(`/api/studies/${study!.id}/uploads`)
    .set('x-csrf-token', token)
    .attach('file', Buffer.from('Month,Assay\n0,100\n3,99\n'), 'warm-up.csv');

  let failed = false;
  const loopDelay = monitorEventLoopDelay({ resolution: 10 });
  loopDelay.enable();
  for (const kind of kinds) {
    const probe = probeHealth(base);
    loopDelay.reset();
    const started = performance.now();
    const statuses = await Promise.all(
      Array.from({ length: CONCURRENT }, (_, index) =>
        agent
          .post(`/api/studies/${study!.id}/uploads`)
          .set('x-csrf-token', token)
          .attach('file', kind.bytes, `${index}-${kind.fileName}`)
          .then((response) => response.status),
      ),
    );
    const elapsed = performance.now() - started;
    const times = await probe.stop();
    const slowest = Math.max(...times);
    const pass = slowest < TARGET_MS && statuses.every((status) => status === kind.status);
    failed ||= !pass;
    console.log(
      `${kind.name} (${(kind.bytes.length / 1024 / 1024).toFixed(1)} MB) × ${CONCURRENT} at once: answered ${[...new Set(statuses)].join('/')} in ${(elapsed / 1000).toFixed(1)} s; /healthz slowest ${slowest.toFixed(0)} ms, median ${median(times).toFixed(0)} ms over ${times.length} probes; event loop delay max ${(loopDelay.max / 1e6).toFixed(0)} ms → ${pass ? 'PASS' : 'FAIL'} (target < ${TARGET_MS} ms, answers ${kind.status})`,
    );
  }

  // For comparison only: the 100,000-row CSVs read on the main thread, as before the parse worker.
  const probe = probeHealth(base);
  loopDelay.reset();
  await new Promise((resolve) => setTimeout(resolve, 4 * PROBE_INTERVAL_MS));
  for (let index = 0; index < CONCURRENT; index += 1) {
    await new Promise((resolve) => setImmediate(resolve));
    await readUpload(kinds[1]!.bytes, 'csv', 'rows.csv');
  }
  const times = await probe.stop();
  console.log(
    `for comparison, the same ${CONCURRENT} ${kinds[1]!.name}s read on the main thread: /healthz slowest ${Math.max(...times).toFixed(0)} ms, event loop delay max ${(loopDelay.max / 1e6).toFixed(0)} ms (not a target)`,
  );

  await new Promise<void>((resolve) => server.close(() => resolve()));
  await world.close();
  console.log(failed ? 'FAIL' : 'PASS');
  process.exit(failed ? 1 : 0);
}

await main();
