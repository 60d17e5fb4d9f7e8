import type { PaperSize } from '../../../../shared/api/reports.ts';
import type { AnalysisRunRecord } from '../../analysis/index.ts';
import type { AttachedTemperatureLog } from '../render/report-temperature-logs.ts';
import type { ReportTemplateSource } from '../render/template-engine.ts';

/**
 * What the render job hands the render pipeline, and what it expects back. The job owns the
 * records and the queue; the pipeline (template, figures, Chromium) owns turning one report
 * version into HTML and PDF bytes. `render-pipeline.ts` is the real one; tests may pass another.
 */

export interface RenderRequest {
  organisation: { id: number; name: string; timeZone: string };
  report: {
    id: number;
    reportNumber: string;
    title: string;
    createdAt: Date;
    author: { id: number; fullName: string };
  };
  version: {
    id: number;
    versionNumber: number;
    paperSize: PaperSize;
    createdAt: Date;
    requestedBy: { id: number; fullName: string };
  };
  run: AnalysisRunRecord;
  template: { versionId: number; versionNumber: number; sha256: string; source: ReportTemplateSource };
  /** Temperature-log assessments attached to the version, in their order. */
  temperatureLogs: AttachedTemperatureLog[];
  /**
   * The run's report figures in reading order, as drawn once and stored (`run-figures.ts`); left
   * out (a preview without a database record), the figures are drawn from their specs when printed.
   */
  runFigures?: readonly { id: string; title: string; description: string; svg: string }[];
}

export interface RenderedReport {
  html: string;
  pdf: Uint8Array;
  pageCount: number;
}

export interface ReportRenderer {
  render(request: RenderRequest): Promise<RenderedReport>;
  close(): Promise<void>;
}

/**
 * A render that did not work. `permanent` failures (the template cannot be filled in with this
 * analysis) fail the version at once; the others (the browser died, a timeout) are retried by the
 * queue. `message` is written for the person reading the report history.
 */
export class RenderFailure extends Error {
  constructor(
    message: string,
    readonly permanent: boolean,
    options?: { cause?: unknown },
  ) {
    super(message, options);
    this.name = 'RenderFailure';
  }
}
