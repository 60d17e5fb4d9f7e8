/**
 * Where a worker thread's script is, in each of the three ways the server runs: compiled
 * (`node dist/server/...`: the `.js` file beside its caller), in development (`tsx`) and under
 * Vitest (both: the `.ts` source). Node 20 cannot load TypeScript itself, and a worker does not
 * get the TypeScript loader of the process that starts it (`--import tsx` in a worker's options
 * is not applied before its first module loads, measured on Node 20.20), so a `.ts` script is
 * started through a two-line module that registers tsx's loader in the worker and then imports
 * the script. tsx is a development dependency, and only `.ts` sources ever need it.
 *
 * Example: from `dist/server/features/intake/parse-pool.js`, `workerScript(import.meta.url,
 * './parse-worker')` is `{ url: …/parse-worker.js, execArgv: process.execArgv }`.
 */
import { createRequire } from 'node:module';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import type { WorkerScript } from './worker-pool.ts';

/** tsx's ESM API (`tsx/esm/api`, whose `register()` installs its loader in the calling thread). */
function tsxEsmApi(): string {
  const packageJson = createRequire(import.meta.url).resolve('tsx/package.json');
  return pathToFileURL(path.join(path.dirname(packageJson), 'dist', 'esm', 'api', 'index.mjs')).href;
}

export function workerScript(callerUrl: string, relativeWithoutExtension: string): WorkerScript {
  const source = new URL(callerUrl).pathname.endsWith('.ts');
  const url = new URL(`${relativeWithoutExtension}.${source ? 'ts' : 'js'}`, callerUrl);
  if (!source) return { url, execArgv: [...process.execArgv] };
  const bootstrap = `import { register } from ${JSON.stringify(tsxEsmApi())}; register(); await import(${JSON.stringify(url.href)});`;
  return {
    url: new URL(`data:text/javascript,${encodeURIComponent(bootstrap)}`),
    execArgv: [...process.execArgv],
  };
}
