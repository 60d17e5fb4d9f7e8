// Runs a CommonJS bundle of scripts/build-cli.mjs with V8's code cache: the functions V8 compiled
// in an earlier run are read back from <bundle>.v8-cache instead of being compiled again, which
// takes about a quarter off the start-up of `fit` (some 0.10 s of CPU instead of 0.13 s; issue 16).
//
// The cache file starts with the SHA-256 of the Node version, the architecture and the bundle's
// text, and is used only for that exact text, so a rebuilt bundle never runs with another's code
// (V8 itself compares little more than the text's length); then the SHA-256 of the cache data,
// because V8 runs damaged data without noticing (and crashes). V8 refuses a cache made under
// other flags itself. When there was no usable cache, the run writes one as it exits (with all
// it compiled; under a temporary name, then renamed, so concurrent runs read a whole file). A
// cache that cannot be written is left out: the command runs the same, only without it. Output
// and exit codes are the bundle's own.
//   runBundle('dist/cli/fit.cjs', ['--json', 'data.csv'])
import { createHash } from 'node:crypto';
import { readFileSync, renameSync, writeFileSync } from 'node:fs';
import Module, { createRequire } from 'node:module';
import path from 'node:path';
import vm from 'node:vm';

const HASH_BYTES = 32;

export const cachePath = (bundle) => `${bundle}.v8-cache`;

const sha256 = (...parts) => {
  const hash = createHash('sha256');
  for (const part of parts) hash.update(part);
  return hash.digest();
};

function storedCache(file, hash) {
  try {
    const stored = readFileSync(file);
    const data = stored.subarray(2 * HASH_BYTES);
    if (
      data.length > 0 &&
      hash.equals(stored.subarray(0, HASH_BYTES)) &&
      sha256(data).equals(stored.subarray(HASH_BYTES, 2 * HASH_BYTES))
    ) {
      return data;
    }
  } catch {
    // no cache yet
  }
  return undefined;
}

function writeCache(file, hash, script) {
  try {
    const temporary = `${file}.${process.pid}.tmp`;
    const data = script.createCachedData();
    writeFileSync(temporary, Buffer.concat([hash, sha256(data), data]));
    renameSync(temporary, file);
  } catch {
    // a read-only dist/: run without a cache
  }
}

/** Runs `bundle` as `node bundle ...args` would, with the code cache beside it. */
export function runBundle(bundle, args) {
  const file = path.resolve(bundle);
  const source = readFileSync(file, 'utf8');
  const hash = sha256(`${process.version} ${process.arch}\n`, source);
  const cacheFile = cachePath(file);
  const cachedData = storedCache(cacheFile, hash);
  const script = new vm.Script(Module.wrap(source), { filename: file, cachedData });
  if (cachedData === undefined || script.cachedDataRejected) {
    process.once('exit', () => writeCache(cacheFile, hash, script));
  }
  process.argv = [process.argv[0], file, ...args];
  const module = { exports: {} };
  script.runInThisContext()(module.exports, createRequire(file), module, file, path.dirname(file));
}
