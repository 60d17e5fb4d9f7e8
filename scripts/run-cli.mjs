#!/usr/bin/env node
// Runs a command-line tool from its bundle, dist/cli/<command>.cjs, building the bundles first
// when one is missing or a file they were built from is newer (scripts/build-cli.mjs, about 0.4 s),
// so a developer who edits the TypeScript never runs a stale bundle. `npm run fit` and
// `npm run mkt` come here; the tests of server/cli spawn it as a user's `npm run` would. The
// bundle runs with V8's code cache (scripts/run-bundle.mjs).
//   node scripts/run-cli.mjs fit --json data.csv
import { bundlePath, CLI_COMMANDS, ensureCliBuild } from './build-cli.mjs';
import { runBundle } from './run-bundle.mjs';

const [command, ...rest] = process.argv.slice(2);
if (!CLI_COMMANDS.includes(command)) {
  process.stderr.write(`run-cli: expected one of ${CLI_COMMANDS.join(', ')}, got ${command ?? 'nothing'}\n`);
  process.exit(2);
}
try {
  await ensureCliBuild();
} catch {
  process.stderr.write(`run-cli: ${command} could not be built; see the errors above.\n`);
  process.exit(1);
}
runBundle(bundlePath(command), rest);
