#!/usr/bin/env node
// Runs a server entry point from the compiled JavaScript in dist/, compiling first when any
// TypeScript source is newer than the last build (`tsc -p tsconfig.server.json`, about 5 s).
// Production and the command line run compiled code; `tsx` is for development only.
//   node scripts/run-built.mjs server/cli/fit.ts --json data.csv
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';

const root = path.resolve(import.meta.dirname, '..');
const stamp = path.join(root, 'dist', '.server-build');
const sources = ['server', 'shared', 'types', 'tsconfig.json', 'tsconfig.server.json'];

function newestSource() {
  let newest = 0;
  const visit = (target) => {
    const info = statSync(target);
    if (info.isDirectory()) for (const name of readdirSync(target)) visit(path.join(target, name));
    else if (/\.(ts|json)$/.test(target)) newest = Math.max(newest, info.mtimeMs);
  };
  for (const source of sources) visit(path.join(root, source));
  return newest;
}

export function ensureServerBuild() {
  if (existsSync(stamp) && statSync(stamp).mtimeMs >= newestSource()) return;
  const tsc = path.join(root, 'node_modules', '.bin', 'tsc');
  execFileSync(tsc, ['-p', path.join(root, 'tsconfig.server.json')], { stdio: 'inherit', cwd: root });
  writeFileSync(stamp, `${new Date().toISOString()}\n`);
}

const [entry, ...rest] = process.argv.slice(2);
if (entry) {
  if (!/^(server|shared)\/.+\.ts$/.test(entry)) {
    process.stderr.write(`run-built: expected a server/….ts entry point, got ${entry}\n`);
    process.exit(2);
  }
  ensureServerBuild();
  const compiled = path.join(root, 'dist', entry.replace(/\.ts$/, '.js'));
  process.argv = [process.argv[0], compiled, ...rest];
  await import(pathToFileURL(compiled).href);
} else {
  ensureServerBuild();
}
