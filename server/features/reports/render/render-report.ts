import { performance } from 'node:perf_hooks';
import type { TopLevelSpec } from 'vega-lite';
import type { FigureSpec } from '../../../../shared/figures/analysis-figures.ts';
import { renderSvg } from '../figures/render-svg.ts';
import type { BrowserPool } from '../pdf/browser-pool.ts';
import { type PdfPaper, type PrintPdfResult, printPdf } from '../pdf/print-pdf.ts';
import type { ReportContext } from './report-context.ts';
import { REPORT_FIGURE_PARTS, reportFigureAttribute, reportFigurePart } from './report-figure-parts.ts';
import { compileReportTemplate, type ReportTemplateSource } from './template-engine.ts';
import type { FigureMarkup } from './template-helpers.ts';

/**
 * The report pipeline, from a built context to a stored-ready PDF: the figures' Vega-Lite specs
 * (the analysis screen's own, from `shared/figures/analysis-figures.ts`) are drawn to SVG on the
 * server, the organisation's template is rendered with the context into one self-contained HTML
 * document (fonts inlined, no external references), and Chromium prints it (`printPdf`).
 *
 * The HTML is returned with the PDF because a report version stores both: the exact HTML is
 * what was printed, and printing it again shows the same page.
 *
 * Which figures a report carries: `reportFigures` keeps the dataset figures (Q1E shelf-life
 * plots, Arrhenius plot) and each series' data with fitted curves; the straight-line and
 * residual plots stay on the analysis screen and in the export.
 *
 * Throws `TemplateError` (template problems with line and column), `FigureRenderError`, and
 * whatever printing throws (see `printPdf`).
 *
 * Example: renderReportPdf(pool, { template: loadDefaultTemplate(), context, figures, paper: 'A4' })
 * resolves to { html, pdf, pageCount, requests, timings }.
 */

export interface RenderReportInput {
  template: ReportTemplateSource;
  /** Built by `buildReportContext` with the same `figures` (their ids, titles and numbers). */
  context: ReportContext;
  /** Figures drawn here from their spec, or drawn before and stored (`svg`), in reading order. */
  figures: readonly (
    | Pick<FigureSpec, 'id' | 'title' | 'description' | 'spec'>
    | { id: string; title: string; description: string; svg: string }
  )[];
  paper: PdfPaper;
}

export interface RenderTimings {
  figuresMs: number;
  templateMs: number;
  /** Wall time of the whole call minus figures and template: printing, metadata, and waiting for the browser. */
  printMs: number;
}

/**
 * The figures of the default report in its reading order (`report-figure-parts.ts`), so that
 * they are numbered as they are read: by part, then by attribute (the study's order).
 */
export function reportFigures<T extends Pick<FigureSpec, 'id'>>(figures: readonly T[]): T[] {
  const rank = (figure: T) => REPORT_FIGURE_PARTS.indexOf(reportFigurePart(figure.id)!);
  return figures
    .filter((figure) => reportFigurePart(figure.id) !== null)
    .sort((a, b) => rank(a) - rank(b) || reportFigureAttribute(a.id) - reportFigureAttribute(b.id));
}

/** Draws each figure to SVG, in order, numbered from 1. */
export async function renderFigureMarkup(
  figures: RenderReportInput['figures'],
): Promise<Map<string, FigureMarkup>> {
  const markup = new Map<string, FigureMarkup>();
  let number = 0;
  for (const figure of figures) {
    number += 1;
    const idPrefix = `figure-${number}`;
    // A stored figure keeps its drawing; only its ids are renamed, so that two figures in one
    // document never share an id (renderSvg prefixed them when it drew the figure).
    const svg =
      'svg' in figure
        ? figure.svg.replace(/(id="|url\(#|href="#)[A-Za-z][A-Za-z0-9_]*-/g, `$1${idPrefix}-`)
        : await renderSvg(figure.spec as unknown as TopLevelSpec, {
            idPrefix,
            title: figure.title,
            description: figure.description,
          });
    markup.set(figure.id, { number, title: figure.title, description: figure.description, svg });
  }
  return markup;
}

/** Renders the report HTML: figures to SVG, then the template. */
export async function renderReportHtml(
  input: RenderReportInput,
): Promise<{ html: string; figuresMs: number; templateMs: number }> {
  const started = performance.now();
  const figures = await renderFigureMarkup(input.figures);
  const drawn = performance.now();
  const html = compileReportTemplate(input.template).render({
    context: input.context,
    figures,
    paper: input.paper,
  });
  return { html, figuresMs: drawn - started, templateMs: performance.now() - drawn };
}

export async function renderReportPdf(
  pool: BrowserPool,
  input: RenderReportInput,
): Promise<PrintPdfResult & { html: string; timings: RenderTimings }> {
  const started = performance.now();
  // The browser page is prepared while the figures are drawn; printing starts when the HTML is ready.
  const rendering = renderReportHtml(input);
  const { context } = input;
  const printed = await printPdf(pool, {
    html: rendering.then((rendered) => rendered.html),
    paper: input.paper,
    header: {
      reportNumber: context.report.number,
      version: context.report.version,
      organisation: context.organisation.name,
    },
    metadata: {
      title: `${context.report.title} (${context.report.number} v${context.report.version})`,
      author: context.report.author,
      // Every attribute of the study, in its order ("Assay, Impurity B, Water"); one: the study's.
      subject: `${context.study.product}: ${context.attributes.map((attribute) => attribute.name).join(', ')}, study ${context.study.title}`,
      keywords: [
        'Rateledger',
        'stability',
        'kinetics',
        context.report.number,
        context.study.product,
        ...context.study.batches,
      ],
      createdAt: context.report.createdAt,
    },
  });
  const { html, figuresMs, templateMs } = await rendering;
  const printMs = performance.now() - started - figuresMs - templateMs;
  return { ...printed, html, timings: { figuresMs, templateMs, printMs } };
}
