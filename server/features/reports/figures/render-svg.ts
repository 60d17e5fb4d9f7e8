import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';

/**
 * Renders a Vega-Lite specification to an SVG string on the server, for the PDF report: the
 * spec is compiled to Vega, run in vega's headless `View` (`renderer: 'none'`, no canvas, no
 * browser JavaScript) and serialised with `toSVG()`; the view is finalised afterwards so no
 * timers or listeners outlive the call.
 *
 * Why on the server: the report is printed by Chromium with JavaScript switched off, so charts
 * must arrive as finished markup. The same spec the analysis screen shows goes in, so the
 * report and the screen cannot disagree.
 *
 * Deterministic output: vega numbers clip paths and gradients from process-wide counters, so
 * they are reset before each render and the ids are then prefixed with `idPrefix` — several
 * figures inlined in one HTML document share one id namespace, and `url(#clip1)` of the second
 * figure must not point at the first figure's clip. Renders are serialised (one at a time) so
 * the counters are never shared by two renders in flight.
 *
 * The text font is forced to `REPORT_FONT` (embedded in the report with `@font-face`), because
 * in Node vega only names the font; whatever renders the SVG picks the glyphs. Data must be
 * inline (`data.values`): the loader refuses every URL and file.
 *
 * Reference: Vega "View API" (vega.github.io/vega/docs/api/view/#view_toSVG) and Vega-Lite
 * "compile" (vega.github.io/vega-lite/usage/compile.html).
 *
 * Throws `FigureRenderError` when the spec does not compile or render, or when the output holds
 * markup a report must not carry (script, foreignObject, external references).
 *
 * Example: renderSvg({ mark: 'point', data: { values: [{ x: 1, y: 2 }] }, encoding: { x: { field:
 * 'x', type: 'quantitative' }, y: { field: 'y', type: 'quantitative' } } }, { idPrefix: 'f1' })
 * resolves to a string starting `<svg xmlns="http://www.w3.org/2000/svg"`.
 */

export const REPORT_FONT = 'Source Sans 3';

export interface RenderSvgOptions {
  /** Prefix for ids inside the SVG (letters, digits, '-', '_'); unique per figure in one document. */
  idPrefix: string;
  /** Accessible title and description written into the SVG for readers and the tagged PDF. */
  title?: string;
  description?: string;
}

export class FigureRenderError extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'FigureRenderError';
  }
}

const ID_PREFIX_PATTERN = /^[A-Za-z][A-Za-z0-9_-]*$/;
const FORBIDDEN_MARKUP = /<script|<foreignObject|\bon[a-z]+\s*=|(?:xlink:)?href\s*=\s*"(?!#|data:)/i;

/** A vega loader that loads nothing and remembers what was asked for. */
function offlineLoader(refused: string[]) {
  const refuse = async (uri: string): Promise<never> => {
    refused.push(String(uri));
    throw new FigureRenderError(`Figures must carry their data inline; "${uri}" was not loaded.`);
  };
  return { load: refuse, sanitize: refuse, http: refuse, file: refuse } as unknown as ReturnType<
    typeof vega.loader
  >;
}

let queue: Promise<unknown> = Promise.resolve();

const escapeXml = (text: string) =>
  text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

async function renderOne(spec: TopLevelSpec, options: RenderSvgOptions): Promise<string> {
  const config = { ...(spec.config ?? {}), font: REPORT_FONT };
  let view: vega.View | null = null;
  try {
    // Vega tags every datum it ingests (a symbol id): it gets a copy, since a spec's data may be
    // the stored result itself, which other readers share (and which the record cache freezes).
    const compiled = compile(structuredClone({ ...spec, config }) as TopLevelSpec).spec;
    vega.resetSVGDefIds();
    const refused: string[] = [];
    view = new vega.View(vega.parse(compiled), {
      renderer: 'none',
      loader: offlineLoader(refused),
      logLevel: vega.None,
    });
    const svg = await view.toSVG();
    if (refused.length > 0) {
      throw new FigureRenderError(`Figures must carry their data inline; "${refused[0]}" was not loaded.`);
    }
    return finishSvg(svg, options);
  } catch (error) {
    if (error instanceof FigureRenderError) throw error;
    throw new FigureRenderError(`The figure could not be drawn: ${(error as Error).message}`, {
      cause: error,
    });
  } finally {
    view?.finalize();
  }
}

/** Prefixes ids, adds role/title/desc, and refuses active or external content. */
function finishSvg(svg: string, options: RenderSvgOptions): string {
  const prefix = options.idPrefix;
  let out = svg
    .replace(/\bid="([^"]+)"/g, (_match, id: string) => `id="${prefix}-${id}"`)
    .replace(/url\(#([^)]+)\)/g, (_match, id: string) => `url(#${prefix}-${id})`);
  if (FORBIDDEN_MARKUP.test(out)) {
    throw new FigureRenderError('The figure contains active or external content and was not embedded.');
  }
  const label = [
    options.title ? `<title>${escapeXml(options.title)}</title>` : '',
    options.description ? `<desc>${escapeXml(options.description)}</desc>` : '',
  ].join('');
  out = out.replace(/^<svg /, '<svg role="img" ');
  return label ? out.replace(/^(<svg[^>]*>)/, `$1${label}`) : out;
}

export function renderSvg(spec: TopLevelSpec, options: RenderSvgOptions): Promise<string> {
  if (!ID_PREFIX_PATTERN.test(options.idPrefix)) {
    return Promise.reject(
      new FigureRenderError(`Figure id prefix "${options.idPrefix}" must be letters, digits, - or _.`),
    );
  }
  const result = queue.then(() => renderOne(spec, options));
  queue = result.catch(() => undefined);
  return result;
}
