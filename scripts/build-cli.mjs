#!/usr/bin/env node
// Builds the command-line tools into one JavaScript file each, dist/cli/fit.cjs and
// dist/cli/mkt.cjs (esbuild: server/cli/<name>.ts with everything it imports, zod, jstat and
// csv-parse included; exceljs stays a package, required only when a workbook is read), so a command
// starts by reading one file instead of resolving and compiling a hundred modules (issue 16:
// start-up under 300 ms). CommonJS, so that `scripts/run-bundle.mjs` can run it with V8's code
// cache (an ES module cannot take one on Node 20). Only the commands' own imports are compiled, without type checking, so
// a type error elsewhere in the server does not stop `fit` from running; `npm test` type-checks.
//   node scripts/build-cli.mjs             always builds (`npm run build`, `npm start`, `npm test`)
//   node scripts/build-cli.mjs --if-stale  builds only when stale (the bench, before it times)
// `scripts/run-cli.mjs` calls `ensureCliBuild()`, which builds only when a bundle is missing or a
// file it was built from (recorded in dist/cli/build.json) is newer than that record.
import { mkdirSync, readFileSync, renameSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';

const root = path.resolve(import.meta.dirname, '..');
/** Where the bundles go; the tests of this script build into a folder of their own. */
export const CLI_OUTDIR = path.join(root, 'dist', 'cli');
const recordIn = (outdir) => path.join(outdir, 'build.json');

/** The commands: `npm run <name>` runs dist/cli/<name>.cjs, built from server/cli/<name>.ts. */
export const CLI_COMMANDS = ['fit', 'mkt'];

/** Files every bundle depends on besides its imports: the packages installed, this script. */
const BUILD_INPUTS = ['package.json', 'package-lock.json', 'tsconfig.json', 'scripts/build-cli.mjs'];

export const bundlePath = (command, outdir = CLI_OUTDIR) => path.join(outdir, `${command}.cjs`);

/** Writes a file under a temporary name and renames it, so a concurrent reader sees old or new. */
function writeAtomically(file, contents) {
  const temporary = `${file}.${process.pid}.tmp`;
  writeFileSync(temporary, contents);
  renameSync(temporary, file);
}

export async function buildCli(outdir = CLI_OUTDIR) {
  const startedAt = new Date();
  const { build } = await import('esbuild');
  const result = await build({
    absWorkingDir: root,
    entryPoints: Object.fromEntries(CLI_COMMANDS.map((name) => [name, `server/cli/${name}.ts`])),
    outdir,
    outExtension: { '.js': '.cjs' },
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node20.19',
    // exceljs (CommonJS, many files) is imported dynamically by the workbook reader only; that
    // import() becomes a require() when it runs, as a script run from source text has no loader.
    external: ['exceljs'],
    supported: { 'dynamic-import': false },
    banner: { js: '// Built by scripts/build-cli.mjs from server/cli/; do not edit.' },
    metafile: true,
    write: false,
    logLevel: 'error',
  });
  mkdirSync(outdir, { recursive: true });
  for (const file of result.outputFiles) writeAtomically(file.path, file.contents);
  const sources = Object.keys(result.metafile.inputs).filter((input) => !input.startsWith('node_modules/'));
  const inputs = [...BUILD_INPUTS, ...sources.sort()];
  const record = recordIn(outdir);
  writeAtomically(record, `${JSON.stringify({ builtAt: startedAt.toISOString(), inputs }, null, 1)}\n`);
  // The record is dated when the build began: a source saved during the build is newer than it.
  utimesSync(record, startedAt, startedAt);
}

/** True when a bundle is missing or any file it was built from is newer than the build record. */
export function cliBuildIsStale(outdir = CLI_OUTDIR) {
  let builtAt;
  let inputs;
  try {
    const record = recordIn(outdir);
    builtAt = statSync(record).mtimeMs;
    inputs = JSON.parse(readFileSync(record, 'utf8')).inputs;
    for (const command of CLI_COMMANDS) statSync(bundlePath(command, outdir));
  } catch {
    return true;
  }
  for (const input of inputs) {
    try {
      if (statSync(path.resolve(root, input)).mtimeMs >= builtAt) return true;
    } catch {
      return true; // a source was removed or renamed
    }
  }
  return false;
}

export async function ensureCliBuild(outdir = CLI_OUTDIR) {
  if (cliBuildIsStale(outdir)) await buildCli(outdir);
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  try {
    if (process.argv[2] === '--if-stale') await ensureCliBuild();
    else await buildCli();
  } catch {
    // esbuild has printed each error with its file and line.
    process.stderr.write('build-cli: the command-line tools could not be built; see the errors above.\n');
    process.exit(1);
  }
}
