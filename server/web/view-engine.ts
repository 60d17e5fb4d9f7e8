import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import Handlebars from 'handlebars';

export const VIEWS_DIR = path.resolve(import.meta.dirname, '../views');

type Template = Handlebars.TemplateDelegate;

/**
 * A small Handlebars view engine for Express: pages in `views/pages`, one layout in
 * `views/layouts/main.hbs`, partials in `views/partials`. Templates are compiled once per process
 * (`strict` off so optional values render empty; HTML escaping stays on).
 */
export function createViewEngine(viewsDir = VIEWS_DIR) {
  const handlebars = Handlebars.create();
  for (const file of readdirSync(path.join(viewsDir, 'partials'))) {
    if (file.endsWith('.hbs')) {
      handlebars.registerPartial(
        path.basename(file, '.hbs'),
        readFileSync(path.join(viewsDir, 'partials', file), 'utf8'),
      );
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
      const html = compile(path.join(viewsDir, 'layouts', 'main.hbs'))({ ...locals, body });
      callback(null, html);
    } catch (error) {
      callback(error);
    }
  };
}
