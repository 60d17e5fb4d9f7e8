/**
 * Signed-in reads at 50 connections (issue 16): `/api/me` (nothing but the fixed cost of a
 * signed-in request) and `/api/reports` as the demo analyst, loaded by autocannon.
 * `npx tsx tests/bench/signed-in-reads.ts` with DATABASE_URL set to a migrated database
 * (`npm run bench` provides one); the demo organisation is seeded when absent.
 *
 * The load generator runs here; the app runs in child processes (this file, argument `server`),
 * so that autocannon does not share the server's event loop. The app logs as in production (one
 * line per request, here to /dev/null). Each round starts two apps: the session path as it was
 * before issue 16 (`sessionFastPath: false`: connect-pg-simple reads the session row, passport
 * reloads the user and roles, and the rolling expiry rewrites the row — three statements, one a
 * write, per request) and as it is (one statement, the row rewritten at most once a minute;
 * `server/platform/auth/session-store.ts`). Each endpoint is then loaded before, now, now,
 * before, `seconds / 2` each, so that a machine getting busier or quieter weighs on both alike.
 * The anchor of each figure is the earlier path in the same round; the issue's own figures
 * (330 requests/s for `/api/me`, p99 532 ms for `/api/reports`, 2-core development machine) are
 * printed beside it, with the database's durability settings: `npm start` keeps PostgreSQL's
 * durable defaults, under which the earlier path's per-request write waits for the WAL, while
 * `npm run bench`'s throwaway cluster turns fsync off, which makes that write cheap and the
 * measured gain smaller.
 *
 * PASS, over the median of the rounds: `/api/me` serves at least 3× the requests per second of
 * the earlier path (ratios taken within a round); both endpoints answer with p99 under 300 ms;
 * no request failed in any round (a connection error, a time-out or an answer other than 200).
 * The rate of `/api/reports` is printed with its ratio but is not a target here: beyond the
 * session it runs two statements of its own (`listReports`). The server's CPU time per request
 * is printed beside (user + system of the app's process; less sensitive to other load than
 * requests/s). Wall-clock figures on a shared machine: rerun before concluding anything.
 * Options: `--rounds=N` (default 3), `--seconds=S` per endpoint and path (default 10);
 * `SIGNED_IN_BENCH_CPU_PROF=<folder>` writes a CPU profile of each app process.
 */
import { type ChildProcess, fork } from 'node:child_process';
import { once } from 'node:events';
import type { AddressInfo } from 'node:net';
import autocannon from 'autocannon';

const CONNECTIONS = 50;
const WARM_UP_SECONDS = 2;
const RATE_FACTOR = 3;
const P99_LIMIT_MS = 300;
const ENDPOINTS = [
  { path: '/api/me', issueRate: 330, issueP99: null, rateTarget: true },
  { path: '/api/reports', issueRate: null, issueP99: 532, rateTarget: false },
] as const;
type Mode = 'before' | 'now';

const option = (name: string, fallback: number) => {
  const given = process.argv.find((arg) => arg.startsWith(`--${name}=`));
  const value = given ? Number(given.slice(name.length + 3)) : fallback;
  if (!Number.isFinite(value) || value <= 0) throw new Error(`signed-in-reads: --${name} must be positive`);
  return value;
};

// ---- The server child --------------------------------------------------------------------------

async function runServer(mode: Mode): Promise<void> {
  const { createApp } = await import('../../server/app.ts');
  const { openDatabase } = await import('../../server/platform/db/client.ts');
  const database = openDatabase(process.env.DATABASE_URL!);
  const app = createApp(database, {
    sessionSecret: 'bench-only-secret-signed-in-reads',
    sessionFastPath: mode === 'now',
  });
  const server = app.listen(0, '127.0.0.1', () => {
    process.send!({ port: (server.address() as AddressInfo).port });
  });
  // The load generator's last requests may still be running (autocannon drops its connections
  // when time is up): the process ends without waiting for them, so nothing uses a closed pool.
  process.on('message', (message: 'cpu' | 'stop') => {
    if (message === 'cpu') {
      const used = process.cpuUsage();
      process.send!({ cpuMicros: used.user + used.system });
      return;
    }
    server.closeAllConnections();
    server.close();
    process.exit(0);
  });
}

// ---- The load generator (this process) -------------------------------------------------------

interface Figures {
  rate: number;
  p99: number;
  failed: number;
  /** The server process's CPU time per answered request, µs (user + system). */
  cpuMicros: number;
}

/** `name=value` of each Set-Cookie, merged into `jar`. */
function keepCookies(jar: Map<string, string>, response: Response): void {
  for (const cookie of response.headers.getSetCookie()) {
    const pair = cookie.split(';')[0]!;
    const equals = pair.indexOf('=');
    jar.set(pair.slice(0, equals), pair.slice(equals + 1));
  }
}
const cookieHeader = (jar: Map<string, string>) =>
  [...jar].map(([name, value]) => `${name}=${value}`).join('; ');

/** Signs the demo analyst in through the form, as a browser does; returns the Cookie header. */
async function signIn(base: string, email: string, password: string): Promise<string> {
  const jar = new Map<string, string>();
  const page = await fetch(`${base}/signin`);
  keepCookies(jar, page);
  const token = /name="_csrf" value="([^"]+)"/.exec(await page.text())?.[1] ?? '';
  const signedIn = await fetch(`${base}/signin`, {
    method: 'POST',
    redirect: 'manual',
    headers: { cookie: cookieHeader(jar), 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ _csrf: token, email, password }),
  });
  keepCookies(jar, signedIn);
  const me = await fetch(`${base}/api/me`, { headers: { cookie: cookieHeader(jar) } });
  if (me.status !== 200) throw new Error(`signed-in-reads: signing in as ${email} failed (${me.status})`);
  return cookieHeader(jar);
}

interface Slice extends Figures {
  requests: number;
  seconds: number;
}

/** The server's CPU time so far, µs. */
async function cpuOf(child: ChildProcess): Promise<number> {
  const answer = once(child, 'message') as Promise<[{ cpuMicros: number }]>;
  child.send('cpu');
  return (await answer)[0].cpuMicros;
}

async function load(server: Server, path: string, seconds: number): Promise<Slice> {
  const cpuBefore = await cpuOf(server.child);
  const result = await autocannon({
    url: `${server.base}${path}`,
    connections: CONNECTIONS,
    duration: seconds,
    headers: { cookie: server.cookie },
  });
  const cpu = (await cpuOf(server.child)) - cpuBefore;
  return {
    rate: result.requests.average,
    p99: result.latency.p99,
    failed: result.errors + result.timeouts + result.non2xx,
    cpuMicros: cpu / Math.max(1, result.requests.total),
    requests: result.requests.total,
    seconds: result.duration,
  };
}

/** Two slices of one mode together: their rate, the worse of their p99s, all their failures. */
const together = (a: Slice, b: Slice): Figures => ({
  rate: (a.requests + b.requests) / (a.seconds + b.seconds),
  p99: Math.max(a.p99, b.p99),
  failed: a.failed + b.failed,
  cpuMicros: (a.cpuMicros * a.requests + b.cpuMicros * b.requests) / Math.max(1, a.requests + b.requests),
});

interface Server {
  child: ChildProcess;
  base: string;
  cookie: string;
}

async function startServer(mode: Mode, account: { email: string; password: string }): Promise<Server> {
  const profile = process.env.SIGNED_IN_BENCH_CPU_PROF;
  const child = fork(import.meta.filename, ['server', mode], {
    stdio: ['ignore', 'ignore', 'inherit', 'ipc'],
    execArgv: [...process.execArgv, ...(profile ? ['--cpu-prof', `--cpu-prof-dir=${profile}`] : [])],
  });
  const [message] = (await once(child, 'message')) as [{ port: number }];
  const base = `http://127.0.0.1:${message.port}`;
  const server = { child, base, cookie: await signIn(base, account.email, account.password) };
  for (const endpoint of ENDPOINTS) await load(server, endpoint.path, WARM_UP_SECONDS);
  return server;
}

async function stopServer(server: Server): Promise<void> {
  const exited = once(server.child, 'exit');
  server.child.send('stop');
  await exited;
}

/**
 * One round: both apps started (each idle while the other is loaded), then per endpoint the
 * slices before, now, now, before (so that a machine getting busier or quieter during the
 * round weighs on both alike), `seconds / 2` each.
 */
async function measureRound(seconds: number, account: { email: string; password: string }) {
  const servers = { before: await startServer('before', account), now: await startServer('now', account) };
  try {
    const figures: Record<Mode, Figures[]> = { before: [], now: [] };
    for (const endpoint of ENDPOINTS) {
      const slice = (mode: Mode) => load(servers[mode], endpoint.path, seconds / 2);
      const first = await slice('before');
      const second = await slice('now');
      const third = await slice('now');
      const fourth = await slice('before');
      figures.before.push(together(first, fourth));
      figures.now.push(together(second, third));
    }
    return figures;
  } finally {
    await stopServer(servers.before);
    await stopServer(servers.now);
  }
}

const median = (values: number[]) => {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle]! : (sorted[middle - 1]! + sorted[middle]!) / 2;
};

async function runLoad(): Promise<void> {
  if (!process.env.DATABASE_URL) {
    console.error('signed-in-reads: set DATABASE_URL to a migrated database (npm run bench does).');
    process.exit(2);
  }
  const rounds = option('rounds', 3);
  const seconds = option('seconds', 10);
  const { openDatabase } = await import('../../server/platform/db/client.ts');
  const { seedDemo } = await import('../../server/demo/seed.ts');
  const { DEMO_ACCOUNTS } = await import('../../server/demo/demo-accounts.ts');
  const database = openDatabase(process.env.DATABASE_URL);
  await seedDemo(database.db);
  const setting = async (name: string) =>
    (await database.pool.query<Record<string, string>>(`show ${name}`)).rows[0]![name];
  const durability = `PostgreSQL fsync ${await setting('fsync')}, synchronous_commit ${await setting('synchronous_commit')}`;
  await database.close();
  const analyst = DEMO_ACCOUNTS.find((account) => account.roles.includes('analyst'))!;

  console.log(
    `${CONNECTIONS} connections, signed in as ${analyst.email}; ${durability}; ${rounds} rounds, each starting the earlier session path ("before") and the current one ("now") in fresh server processes (warm-up ${WARM_UP_SECONDS} s per endpoint) and loading each endpoint before/now/now/before for ${seconds / 2} s at a time`,
  );
  const results: Record<Mode, Figures[][]> = { before: [], now: [] };
  for (let round = 0; round < rounds; round += 1) {
    const figures = await measureRound(seconds, analyst);
    results.before.push(figures.before);
    results.now.push(figures.now);
    const line = ENDPOINTS.map((endpoint, index) => {
      const [before, now] = [results.before[round]![index]!, results.now[round]![index]!];
      return `${endpoint.path} ${before.rate.toFixed(0)} → ${now.rate.toFixed(0)} req/s (×${(now.rate / before.rate).toFixed(2)}), p99 ${before.p99} → ${now.p99} ms, failed ${before.failed} → ${now.failed}, server CPU ${before.cpuMicros.toFixed(0)} → ${now.cpuMicros.toFixed(0)} µs per request`;
    }).join('; ');
    console.log(`round ${round + 1}: ${line}`);
  }

  let failed = false;
  for (const [index, endpoint] of ENDPOINTS.entries()) {
    const of = (mode: Mode, pick: (figures: Figures) => number) =>
      median(results[mode].map((round) => pick(round[index]!)));
    const ratio = median(results.now.map((round, r) => round[index]!.rate / results.before[r]![index]!.rate));
    const [rate, p99, errors] = [
      of('now', (f) => f.rate),
      of('now', (f) => f.p99),
      of('now', (f) => f.failed),
    ];
    const worstErrors = Math.max(...results.now.map((round) => round[index]!.failed));
    const pass = (!endpoint.rateTarget || ratio >= RATE_FACTOR) && p99 < P99_LIMIT_MS && worstErrors === 0;
    failed ||= !pass;
    const issue = [
      endpoint.issueRate === null
        ? ''
        : `issue's ${endpoint.issueRate} req/s → ${(rate / endpoint.issueRate).toFixed(2)}×`,
      endpoint.issueP99 === null ? '' : `issue's p99 ${endpoint.issueP99} ms`,
    ]
      .filter(Boolean)
      .join(', ');
    console.log(
      `${endpoint.path}: ${rate.toFixed(0)} req/s, p99 ${p99} ms, ${errors} failed (median of ${rounds}); before in the same runs ${of('before', (f) => f.rate).toFixed(0)} req/s, p99 ${of('before', (f) => f.p99)} ms → ×${ratio.toFixed(2)} (${issue}); server CPU per request ${of('before', (f) => f.cpuMicros).toFixed(0)} → ${of('now', (f) => f.cpuMicros).toFixed(0)} µs → ${pass ? 'PASS' : 'FAIL'} (target ${endpoint.rateTarget ? `≥ ${RATE_FACTOR}× the rate before, ` : ''}p99 < ${P99_LIMIT_MS} ms, 0 failed)`,
    );
  }
  console.log(failed ? 'FAIL' : 'PASS');
  process.exit(failed ? 1 : 0);
}

if (process.argv[2] === 'server') await runServer(process.argv[3] as Mode);
else await runLoad();
