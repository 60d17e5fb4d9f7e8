import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';

/**
 * The folder holding the project's package.json, found by walking up from this module. Paths to
 * the project's own files (migrations, default templates, client build, views) start here, so
 * they are the same whether the server runs from TypeScript sources (`server/…`, development) or
 * from the compiled JavaScript (`dist/server/…`, production).
 */
function findProjectRoot(start: string): string {
  let folder = start;
  for (;;) {
    const manifest = path.join(folder, 'package.json');
    if (existsSync(manifest) && JSON.parse(readFileSync(manifest, 'utf8')).name === 'rateledger') {
      return folder;
    }
    const parent = path.dirname(folder);
    if (parent === folder) throw new Error(`No Rateledger package.json above ${start}`);
    folder = parent;
  }
}

export const PROJECT_ROOT = findProjectRoot(import.meta.dirname);

/** A path inside the project, from its root: `projectPath('drizzle')`. */
export const projectPath = (...parts: string[]) => path.join(PROJECT_ROOT, ...parts);
