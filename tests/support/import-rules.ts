import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';

/**
 * The direction imports may take, checked over the project's source files:
 * - `shared/` imports only `shared/` (it runs in Node and the browser);
 * - `src/` never imports `server/` (islands talk to the server over HTTP);
 * - `server/platform/` imports no feature and nothing above it (app, cli, demo);
 * - a feature reaches another feature only through that feature's `index.ts`;
 * - no feature imports the app's entry points, the command line or the demo seed;
 * - the features, linked by those imports, form no cycle.
 */
export interface SourceFile {
  /** Path from the project root, with forward slashes: `server/features/intake/uploads.ts`. */
  path: string;
  text: string;
}

export interface ImportViolation {
  file: string;
  specifier: string;
  rule: string;
}

const SPECIFIER =
  /(?:\bfrom\s*|\bimport\s*\(\s*|^\s*import\s+|\bexport\s+\*\s+from\s*)(['"])(\.{1,2}\/[^'"]+)\1/gm;

/** Relative import specifiers of a module, including type-only imports and re-exports. */
export function relativeImports(text: string): string[] {
  return [...text.matchAll(SPECIFIER)].map((match) => match[2] as string);
}

const featureOf = (file: string) => /^server\/features\/([^/]+)\//.exec(file)?.[1] ?? null;
const isEntry = (file: string) =>
  /^server\/(app|index|worker)\.ts$/.test(file) || /^server\/(cli|demo)\//.test(file);

export function importViolations(files: SourceFile[]): ImportViolation[] {
  const violations: ImportViolation[] = [];
  const featureEdges = new Map<string, Set<string>>();
  for (const file of files) {
    for (const specifier of relativeImports(file.text)) {
      const target = path.posix.normalize(path.posix.join(path.posix.dirname(file.path), specifier));
      const add = (rule: string) => violations.push({ file: file.path, specifier, rule });
      // A test beside shared code may compare it with a test reference (tests/reference/); the code
      // itself may not reach outside shared/.
      const testReference = /\.test\.tsx?$/.test(file.path) && target.startsWith('tests/reference/');
      if (file.path.startsWith('shared/') && !target.startsWith('shared/') && !testReference) {
        add('shared/ imports only shared/');
      }
      if (file.path.startsWith('src/') && target.startsWith('server/')) {
        add('src/ never imports server/ (islands talk to the server over HTTP)');
      }
      if (file.path.startsWith('server/platform/') && !target.startsWith('server/platform/')) {
        if (target.startsWith('server/')) add('server/platform/ imports no feature and nothing above it');
      }
      const from = featureOf(file.path);
      const to = featureOf(target);
      if (from && isEntry(target)) add('a feature never imports the entry points, cli or demo');
      if (from && to && from !== to) {
        if (target !== `server/features/${to}/index.ts`) {
          add(`a feature reaches another only through its index.ts (server/features/${to}/index.ts)`);
        }
        if (!featureEdges.has(from)) featureEdges.set(from, new Set());
        featureEdges.get(from)?.add(to);
      }
    }
  }
  for (const cycle of featureCycles(featureEdges)) {
    violations.push({
      file: `server/features/${cycle[0]}`,
      specifier: cycle.join(' → '),
      rule: 'features form no cycle',
    });
  }
  return violations;
}

/** Each cycle among features, found by depth-first search (reported once, from its first feature). */
function featureCycles(edges: Map<string, Set<string>>): string[][] {
  const cycles: string[][] = [];
  const done = new Set<string>();
  const visit = (feature: string, trail: string[]) => {
    const at = trail.indexOf(feature);
    if (at >= 0) {
      cycles.push([...trail.slice(at), feature]);
      return;
    }
    if (done.has(feature)) return;
    for (const next of edges.get(feature) ?? []) visit(next, [...trail, feature]);
    done.add(feature);
  };
  for (const feature of [...edges.keys()].sort()) visit(feature, []);
  return cycles;
}

/** Every TypeScript source file under the given top-level folders of the project. */
export function readSourceFiles(root: string, folders: string[]): SourceFile[] {
  const files: SourceFile[] = [];
  const walk = (relative: string) => {
    for (const entry of readdirSync(path.join(root, relative), { withFileTypes: true })) {
      const child = `${relative}/${entry.name}`;
      if (entry.isDirectory()) walk(child);
      else if (/\.(ts|tsx)$/.test(entry.name)) {
        files.push({ path: child, text: readFileSync(path.join(root, child), 'utf8') });
      }
    }
  };
  for (const folder of folders) walk(folder);
  return files;
}
