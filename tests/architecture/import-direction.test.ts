import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { importViolations, readSourceFiles, relativeImports } from '../support/import-rules.ts';

const ROOT = path.resolve(import.meta.dirname, '../..');

describe('import direction (common practice: layered architecture, enforced by a test)', () => {
  it('the project follows every rule', () => {
    const files = readSourceFiles(ROOT, ['shared', 'server', 'src']);
    expect(files.length).toBeGreaterThan(100);
    expect(importViolations(files)).toEqual([]);
  });

  it('sees type-only imports, re-exports and dynamic imports', () => {
    const text = [
      "import type { A } from './a.ts';",
      "export * from './b.ts';",
      "const c = await import('../c.ts');",
      "import { d } from 'express';",
    ].join('\n');
    expect(relativeImports(text)).toEqual(['./a.ts', './b.ts', '../c.ts']);
  });

  it('catches a planted violation of each rule (the check can fail)', () => {
    const planted = importViolations([
      { path: 'server/platform/web/x.ts', text: "import { y } from '../../features/intake/index.ts';" },
      { path: 'server/features/review/x.ts', text: "import type { y } from '../reports/report-storage.ts';" },
      { path: 'server/features/studies/x.ts', text: "import { y } from '../../app.ts';" },
      { path: 'shared/kinetics/x.ts', text: "import { y } from '../../server/platform/db/client.ts';" },
      { path: 'shared/kinetics/w.ts', text: "import { y } from '../../tests/reference/predict-on-line.ts';" },
      { path: 'src/lib/x.ts', text: "import { y } from '../../server/platform/http/http-error.ts';" },
      { path: 'server/features/a/x.ts', text: "import { y } from '../b/index.ts';" },
      { path: 'server/features/b/x.ts', text: "import { y } from '../a/index.ts';" },
    ]);
    expect(planted.map((violation) => [violation.file, violation.rule])).toEqual([
      ['server/platform/web/x.ts', 'server/platform/ imports no feature and nothing above it'],
      [
        'server/features/review/x.ts',
        'a feature reaches another only through its index.ts (server/features/reports/index.ts)',
      ],
      ['server/features/studies/x.ts', 'a feature never imports the entry points, cli or demo'],
      ['shared/kinetics/x.ts', 'shared/ imports only shared/'],
      ['shared/kinetics/w.ts', 'shared/ imports only shared/'],
      ['src/lib/x.ts', 'src/ never imports server/ (islands talk to the server over HTTP)'],
      ['server/features/a', 'features form no cycle'],
    ]);
  });

  it('accepts imports through an index and within a feature', () => {
    expect(
      importViolations([
        { path: 'server/features/review/x.ts', text: "import { y } from '../reports/index.ts';" },
        { path: 'server/features/review/z.ts', text: "import { y } from './x.ts';" },
        { path: 'server/app.ts', text: "import { y } from './features/review/index.ts';" },
        // A test of shared code may compare it with a test reference.
        {
          path: 'shared/kinetics/x.test.ts',
          text: "import { y } from '../../tests/reference/predict-on-line.ts';",
        },
      ]),
    ).toEqual([]);
  });
});
