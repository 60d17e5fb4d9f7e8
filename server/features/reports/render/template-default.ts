import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { projectPath } from '../../../platform/config/project-root.ts';
import type { ReportTemplateSource } from './template-engine.ts';

/**
 * The default report template shipped in `templates/default/`: `report.hbs` (the document),
 * `report.css` (print styles) and `partials/*.hbs` (letterhead, caution, signatures). An
 * organisation's own template starts as a copy of it.
 *
 * Throws when the folder is missing (a broken checkout), with the path.
 *
 * Example: loadDefaultTemplate().partials has the keys caution, letterhead and signatures.
 */

export const DEFAULT_TEMPLATE_DIR = projectPath('templates', 'default');

export function loadDefaultTemplate(folder = DEFAULT_TEMPLATE_DIR): ReportTemplateSource {
  const read = (file: string) => readFileSync(path.join(folder, file), 'utf8');
  const partials: Record<string, string> = {};
  for (const file of readdirSync(path.join(folder, 'partials')).sort()) {
    if (file.endsWith('.hbs')) partials[path.basename(file, '.hbs')] = read(path.join('partials', file));
  }
  return { body: read('report.hbs'), stylesheet: read('report.css'), partials };
}
