import type { TopLevelSpec } from 'vega-lite';
import { analysisFigures } from '../../shared/figures/analysis-figures.ts';
import { renderSvg } from '../figures/render-svg.ts';
import { BrowserPool } from '../pdf/browser-pool.ts';
import { printPdf } from '../pdf/print-pdf.ts';
import { buildReportContext } from '../reports/report-context.ts';
import { compileReportTemplate, TemplateError } from '../reports/template-engine.ts';
import type { FigureMarkup } from '../reports/template-helpers.ts';
import { RenderFailure, type RenderedReport, type RenderRequest, type ReportRenderer } from './report-renderer.ts';

/**
 * The real render pipeline behind the job: the analysis screen's Vega-Lite figures drawn to SVG
 * on the server, the template filled with `buildReportContext`, and the HTML printed by a warm
 * Chromium from `BrowserPool` (`RENDER_BROWSERS` browsers, default 1).
 *
 * Failures are sorted for the queue: a template that cannot be filled in with this analysis, or
 * a figure that cannot be drawn, will fail the same way every time (permanent); a browser that
 * cannot start or print may work on the next attempt (retried).
 */

const PAPER = { a4: 'A4', letter: 'Letter' } as const;

export function createRenderPipeline(options: { browsers?: number } = {}): ReportRenderer {
  const pool = new BrowserPool({ size: options.browsers ?? Number(process.env.RENDER_BROWSERS ?? 1) });
  return {
    async render(request: RenderRequest): Promise<RenderedReport> {
      const html = await reportHtml(request);
      try {
        const printed = await printPdf(pool, {
          html,
          paper: PAPER[request.version.paperSize],
          header: {
            reportNumber: request.report.reportNumber,
            version: request.version.versionNumber,
            organisation: request.organisation.name,
          },
          metadata: {
            title: `${request.report.reportNumber} v${request.version.versionNumber}: ${request.report.title}`,
            author: request.report.author.fullName,
            subject: `Degradation kinetics of ${request.run.study.product} (${request.run.study.attribute})`,
            keywords: [request.report.reportNumber, request.run.study.product, 'stability', 'kinetics'],
            createdAt: request.version.createdAt,
          },
        });
        return { html, pdf: printed.pdf, pageCount: printed.pageCount };
      } catch (error) {
        throw new RenderFailure(`Chromium could not print the report: ${(error as Error).message}`, false, {
          cause: error,
        });
      }
    },
    close: () => pool.close(),
  };
}

/** The exact HTML of one report version (what is stored and printed). */
export async function reportHtml(request: RenderRequest): Promise<string> {
  const { run } = request;
  const limits = {
    ...(run.study.lowerLimit === null ? {} : { lower: run.study.lowerLimit }),
    ...(run.study.upperLimit === null ? {} : { upper: run.study.upperLimit }),
  };
  const specs = analysisFigures(run.result, run.series, limits);
  const figures = new Map<string, FigureMarkup>();
  try {
    for (const [index, figure] of specs.entries()) {
      const svg = await renderSvg(figure.spec as unknown as TopLevelSpec, {
        idPrefix: `f${index + 1}`,
        title: figure.title,
        description: figure.description,
      });
      figures.set(figure.id, { number: index + 1, title: figure.title, description: figure.description, svg });
    }
  } catch (error) {
    throw new RenderFailure(`A figure of the analysis could not be drawn: ${(error as Error).message}`, true, {
      cause: error,
    });
  }
  try {
    const context = buildReportContext({
      organisation: { name: request.organisation.name, timeZone: request.organisation.timeZone },
      study: run.study,
      analysisRun: {
        id: run.id,
        runAt: run.runAt,
        runBy: run.runBy.fullName,
        engineVersion: run.engineVersion,
        datasetId: run.datasetId,
        datasetSha256: run.datasetSha256,
        supersedesRunId: run.supersedesRunId,
        result: run.result,
        series: run.series,
      },
      figures: specs,
      report: {
        number: request.report.reportNumber,
        version: request.version.versionNumber,
        author: request.report.author.fullName,
        createdAt: request.version.createdAt,
        title: request.report.title,
      },
    });
    const template = compileReportTemplate(request.template.source);
    return template.render({ context, figures, paper: PAPER[request.version.paperSize] });
  } catch (error) {
    const detail = error instanceof TemplateError ? error.message : (error as Error).message;
    throw new RenderFailure(
      `Template version ${request.template.versionNumber} could not be filled in with analysis ${run.id}: ${detail}`,
      true,
      { cause: error },
    );
  }
}
