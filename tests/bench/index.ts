/**
 * Runs every benchmark script in this folder (every `*.ts` here except this file), one after
 * another in its own Node process via tsx, so one benchmark's warm JIT or heap does not flatter
 * the next. Exits non-zero when any script fails (a script signals a missed target with a
 * non-zero exit code).
 *
 * Usage: `npm run bench`.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import path from 'node:path';

const folder = import.meta.dirname;
const scripts = readdirSync(folder)
  .filter((name) => name.endsWith('.ts') && name !== 'index.ts' && !name.endsWith('.test.ts'))
  .sort();

let failures = 0;
for (const script of scripts) {
  console.log(`\n== ${script} ==`);
  const run = spawnSync(process.execPath, ['--import', 'tsx', path.join(folder, script)], {
    stdio: 'inherit',
  });
  if (run.status !== 0) {
    failures += 1;
    console.log(`${script} exited with ${run.status ?? run.signal}`);
  }
}
console.log(`\n${scripts.length - failures} of ${scripts.length} benchmark scripts passed.`);
process.exit(failures === 0 ? 0 : 1);
