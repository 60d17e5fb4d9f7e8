import { createHash } from 'node:crypto';
import Handlebars from 'handlebars';
import { checkTemplateSyntax, type TemplateProblem } from './template-check.ts';
import { fontFaceCss } from './template-fonts.ts';
import { type FigureMarkup, registerTemplateHelpers, TEMPLATE_HELPERS } from './template-helpers.ts';

/**
 * Compiles an organisation's report template into a render function, in a Handlebars
 * environment of its own (`Handlebars.create()`): one template's partials and helpers never
 * leak into another's, and nothing registered on the global Handlebars instance (the web
 * views' helpers) is visible.
 *
 * The protections, and why each holds:
 * - Prototype access stays denied: the render passes no `allowProtoPropertiesByDefault` /
 *   `allowProtoMethodsByDefault`, so `constructor`, `__proto__` and inherited methods resolve to
 *   nothing (Handlebars ≥ 4.6 runtime options).
 * - Every value is HTML-escaped: triple braces are refused by `checkTemplateSyntax`, and only
 *   helpers that build markup from escaped parts return `SafeString`.
 * - `strict` compile (default): a misspelt variable is an error with its line and column rather
 *   than a silently empty field in a regulated record.
 * - The `log` helper is removed, so a template cannot write the context to the server log.
 *
 * Errors — syntax, refused constructs, unknown variables, helper misuse — are thrown as one
 * `TemplateError` whose `problems` carry part, line and column (1-based).
 *
 * Reference: Handlebars API reference, "Handlebars.create", "Runtime options: prototype access"
 * (handlebarsjs.com/api-reference).
 *
 * Example: compileReportTemplate({ body: '<p>{{study.product}}</p>', partials: {}, stylesheet: '' })
 * .render({ context: { study: { product: 'A & B' } }, figures: new Map(), paper: 'A4' }) is
 * '<p>A &amp; B</p>'.
 */

export interface ReportTemplateSource {
  /** The main template: a whole HTML document. */
  body: string;
  /** Partials by name, used as {{> name}}. */
  partials: Record<string, string>;
  /** The template's print CSS, emitted by {{reportStyles}} together with the embedded fonts. */
  stylesheet: string;
}

export type PaperSize = 'A4' | 'Letter';

export interface ReportRenderInput {
  context: object;
  figures: ReadonlyMap<string, FigureMarkup>;
  paper: PaperSize;
}

export interface CompiledReportTemplate {
  render(input: ReportRenderInput): string;
}

export class TemplateError extends Error {
  constructor(readonly problems: TemplateProblem[]) {
    super(
      problems
        .map((problem) =>
          problem.line === null
            ? `${problem.part}: ${problem.message}`
            : `${problem.part}, line ${problem.line}, column ${problem.column}: ${problem.message}`,
        )
        .join('\n'),
    );
    this.name = 'TemplateError';
  }
}

const PART_NAME = /^[a-z][a-z0-9-]*$/;
const HELPER_NAMES = new Set([
  ...TEMPLATE_HELPERS.map((helper) => helper.name),
  'if',
  'unless',
  'each',
  'with',
  'lookup',
]);

/** Turns a Handlebars or helper exception thrown while rendering into a located problem. */
function runtimeProblem(error: unknown, part: string): TemplateProblem {
  const exception = error as Error & {
    lineNumber?: number;
    column?: number;
    reportPart?: string;
    reportLoc?: hbs.AST.SourceLocation;
  };
  const where = exception.reportPart ?? part;
  let message = exception.message.replace(/ - \d+:\d+$/, '');
  const unknown = /^"([^"]+)" not defined in/.exec(message);
  if (unknown)
    message = `Unknown variable "${unknown[1]}" (check the spelling against the list of template variables).`;
  if (exception.reportLoc) {
    return {
      part: where,
      line: exception.reportLoc.start.line,
      column: exception.reportLoc.start.column + 1,
      message,
    };
  }
  const line = exception.lineNumber ?? null;
  return { part: where, line, column: line === null ? null : (exception.column ?? 0) + 1, message };
}

/** Wraps each helper so an error it throws carries the location of the call. */
function locateHelperErrors(env: typeof Handlebars): void {
  for (const [name, helper] of Object.entries(env.helpers)) {
    env.helpers[name] = function (this: unknown, ...list: unknown[]) {
      try {
        return (helper as (...args: unknown[]) => unknown).apply(this, list);
      } catch (error) {
        const options = list.at(-1) as { loc?: hbs.AST.SourceLocation } | undefined;
        if (error instanceof Error && options?.loc && !('reportLoc' in error)) {
          Object.assign(error, { reportLoc: options.loc });
        }
        throw error;
      }
    };
  }
}

function compileUncached(source: ReportTemplateSource, strict: boolean): CompiledReportTemplate {
  const partNames = Object.keys(source.partials);
  const problems: TemplateProblem[] = partNames
    .filter((name) => !PART_NAME.test(name))
    .map((name) => ({
      part: `partial "${name}"`,
      line: null,
      column: null,
      message: 'Partial names are lower-case letters, digits and -.',
    }));
  const known = { partials: partNames, helpers: HELPER_NAMES };
  problems.push(...checkTemplateSyntax(source.body, 'body', known));
  for (const name of partNames) {
    problems.push(...checkTemplateSyntax(source.partials[name] as string, `partial "${name}"`, known));
  }
  if (problems.length > 0) throw new TemplateError(problems);

  const env = Handlebars.create();
  env.unregisterHelper('log');
  registerTemplateHelpers(env);
  const stylesheet = source.stylesheet.replace(/<\//g, '<\\/');
  env.registerHelper('reportStyles', (options: Handlebars.HelperOptions) => {
    const paper = (options.data as { paper?: PaperSize }).paper === 'Letter' ? 'letter' : 'A4';
    return new env.SafeString(`<style>\n${fontFaceCss()}\n@page{size:${paper};}\n${stylesheet}\n</style>`);
  });
  locateHelperErrors(env);
  const compileOptions = {
    strict,
    knownHelpers: Object.fromEntries([...HELPER_NAMES].map((name) => [name, true])),
  };
  for (const name of partNames) {
    const partial = env.compile(source.partials[name] as string, compileOptions);
    env.registerPartial(name, ((context: unknown, options: Handlebars.RuntimeOptions) => {
      try {
        return partial(context, options);
      } catch (error) {
        if (error instanceof Error && !('reportPart' in error))
          Object.assign(error, { reportPart: `partial "${name}"` });
        throw error;
      }
    }) as Handlebars.TemplateDelegate);
  }
  const body = env.compile(source.body, compileOptions);
  return {
    render({ context, figures, paper }) {
      try {
        return body(context, { data: { figureSvg: new Map(figures), paper } });
      } catch (error) {
        throw new TemplateError([runtimeProblem(error, 'body')]);
      }
    },
  };
}

const CACHE_LIMIT = 32;
const cache = new Map<string, CompiledReportTemplate>();

/** Compiles (or reuses the compiled form of) a template; see the file comment. */
export function compileReportTemplate(
  source: ReportTemplateSource,
  options: { strict?: boolean } = {},
): CompiledReportTemplate {
  const strict = options.strict ?? true;
  const key = createHash('sha256')
    .update(JSON.stringify([strict, source.body, source.stylesheet, Object.entries(source.partials).sort()]))
    .digest('hex');
  let compiled = cache.get(key);
  if (!compiled) {
    compiled = compileUncached(source, strict);
    if (cache.size >= CACHE_LIMIT) cache.delete(cache.keys().next().value as string);
    cache.set(key, compiled);
  }
  return compiled;
}

/** The problems of a template without rendering it (for the editor); empty when it compiles. */
export function checkReportTemplate(source: ReportTemplateSource): TemplateProblem[] {
  try {
    compileUncached(source, true);
    return [];
  } catch (error) {
    if (error instanceof TemplateError) return error.problems;
    throw error;
  }
}

export type { TemplateProblem };
