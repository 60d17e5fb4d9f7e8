import { FigureRenderError } from '../figures/render-svg.ts';
import { BrowserPool } from '../pdf/browser-pool.ts';
import { type RenderReportInput, renderReportPdf } from '../render/render-report.ts';
import { buildReportContext, type ReportContext } from '../render/report-context.ts';
import { reportFigurePart } from '../render/report-figure-parts.ts';
import { reportRunFigures } from '../render/report-figures.ts';
import { reportTemperatureLogs } from '../render/report-temperature-logs.ts';
import { TemplateError } from '../render/template-engine.ts';
import {
  type RenderedReport,
  RenderFailure,
  type RenderRequest,
  type ReportRenderer,
} from './report-renderer.ts';

/**
 * The real render pipeline behind the job: the records of one report version become the
 * template's context (`buildReportContext`), and `renderReportPdf` draws the figures, fills the
 * template and prints it in a warm Chromium from a `BrowserPool` (`RENDER_BROWSERS` browsers,
 * default 1, restarted if one dies).
 *
 * Failures are sorted for the queue: a template that cannot be filled in with this analysis, a
 * figure that cannot be drawn or a run without a result fails the same way every time
 * (permanent, the version fails at once with the reason); a browser that cannot start or print
 * may work on the next attempt (retried).
 */

const PAPER = { a4: 'A4', letter: 'Letter' } as const;

export function createRenderPipeline(options: { browsers?: number } = {}): ReportRenderer {
  const pool = new BrowserPool({ size: options.browsers ?? Number(process.env.RENDER_BROWSERS ?? 1) });
  return {
    async render(request: RenderRequest): Promise<RenderedReport> {
      const { context, figures } = reportInput(request);
      try {
        const printed = await renderReportPdf(pool, {
          template: request.template.source,
          context,
          figures,
          paper: PAPER[request.version.paperSize],
        });
        return { html: printed.html, pdf: printed.pdf, pageCount: printed.pageCount };
      } catch (error) {
        if (error instanceof TemplateError) {
          throw new RenderFailure(
            `Template version ${request.template.versionNumber} could not be filled in with analysis ${request.run.id}: ${error.message}`,
            true,
            { cause: error },
          );
        }
        if (error instanceof FigureRenderError) {
          throw new RenderFailure(`A figure of the analysis could not be drawn: ${error.message}`, true, {
            cause: error,
          });
        }
        throw new RenderFailure(`Chromium could not print the report: ${(error as Error).message}`, false, {
          cause: error,
        });
      }
    },
    close: () => pool.close(),
  };
}

/** The report figures of the version's run, in reading order, as specs. */
export function runReportFigures(request: Pick<RenderRequest, 'run'>) {
  const { run } = request;
  return reportRunFigures(run.result, run.series, {
    name: run.study.attribute,
    lowerLimit: run.study.lowerLimit,
    upperLimit: run.study.upperLimit,
  });
}

/** The context and figures of one report version, from its records. */
export function reportInput(request: RenderRequest): {
  context: ReportContext;
  figures: RenderReportInput['figures'];
} {
  const { run } = request;
  try {
    const logs = reportTemperatureLogs(request.temperatureLogs ?? []);
    // Numbered in reading order: the excursion section comes after temperature dependence and
    // before Appendix A's per-series figures.
    const analysis: RenderReportInput['figures'] = request.runFigures ?? runReportFigures(request);
    const inAppendix = analysis.filter((figure) => reportFigurePart(figure.id) === 'series');
    const figures = [
      ...analysis.filter((figure) => reportFigurePart(figure.id) !== 'series'),
      ...logs.figures,
      ...inAppendix,
    ];
    const context = buildReportContext({
      temperatureLogs: logs.entries,
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
      figures,
      report: {
        number: request.report.reportNumber,
        version: request.version.versionNumber,
        author: request.report.author.fullName,
        createdAt: request.version.createdAt,
        title: request.report.title,
      },
    });
    return { context, figures };
  } catch (error) {
    throw new RenderFailure(
      `The analysis ${run.id} could not be turned into a report: ${(error as Error).message}`,
      true,
      { cause: error },
    );
  }
}
