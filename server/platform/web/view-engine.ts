import { existsSync, readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import Handlebars from 'handlebars';
import { projectPath } from '../config/project-root.ts';

/** The platform's own views: the layout, the error page and the site header. */
export const PLATFORM_VIEWS_DIR = projectPath('server', 'platform', 'web', 'views');
const FEATURES_DIR = projectPath('server', 'features');

/**
 * Every folder that holds pages: the platform's, then each feature's `views/` (a feature keeps its
 * pages beside its routes). Read from the source tree, so the compiled server finds them too.
 */
export function viewFolders(): string[] {
  const features = readdirSync(FEATURES_DIR, { withFileTypes: true })
    .filter((entry) => entry.isDirectory())
    .map((entry) => path.join(FEATURES_DIR, entry.name, 'views'))
    .filter((folder) => existsSync(folder))
    .sort();
  return [PLATFORM_VIEWS_DIR, ...features];
}

type Template = Handlebars.TemplateDelegate;

/**
 * A small Handlebars view engine for Express: pages are `<name>.hbs` in any of `viewFolders()`,
 * one layout in the platform's `views/layouts/main.hbs`, partials in each folder's `partials/`.
 * A page or partial name may exist only once across the folders (a clash throws at start-up).
 * Templates are compiled once per process (`strict` off so optional values render empty; HTML
 * escaping stays on).
 */
export function createViewEngine(folders = viewFolders()) {
  const handlebars = Handlebars.create();
  const seen = new Map<string, string>();
  for (const folder of folders) {
    const partials = path.join(folder, 'partials');
    for (const file of existsSync(partials) ? readdirSync(partials) : []) {
      if (!file.endsWith('.hbs')) continue;
      claimName(seen, `partial ${path.basename(file, '.hbs')}`, path.join(partials, file));
      handlebars.registerPartial(
        path.basename(file, '.hbs'),
        readFileSync(path.join(partials, file), 'utf8'),
      );
    }
    for (const file of readdirSync(folder)) {
      if (file.endsWith('.hbs')) claimName(seen, `page ${file}`, path.join(folder, file));
    }
  }
  handlebars.registerHelper('eq', (a: unknown, b: unknown) => a === b);
  handlebars.registerHelper('json', (value: unknown) => JSON.stringify(value ?? null));
  handlebars.registerHelper('formatTime', (value: unknown) => {
    const date = value instanceof Date ? value : typeof value === 'string' ? new Date(value) : null;
    return date && !Number.isNaN(date.getTime())
      ? `${date.toISOString().replace('T', ' ').slice(0, 19)} UTC`
      : '';
  });

  const cache = new Map<string, Template>();
  const compile = (file: string): Template => {
    let template = cache.get(file);
    if (!template) {
      template = handlebars.compile(readFileSync(file, 'utf8'));
      cache.set(file, template);
    }
    return template;
  };

  return (filePath: string, options: object, callback: (error: unknown, html?: string) => void) => {
    try {
      const locals = options as Record<string, unknown>;
      const body = compile(filePath)(locals);
      const html = compile(path.join(PLATFORM_VIEWS_DIR, 'layouts', 'main.hbs'))({ ...locals, body });
      callback(null, html);
    } catch (error) {
      callback(error);
    }
  };
}

function claimName(seen: Map<string, string>, name: string, file: string) {
  const earlier = seen.get(name);
  if (earlier) throw new Error(`Two views named ${name}: ${earlier} and ${file}`);
  seen.set(name, file);
}
