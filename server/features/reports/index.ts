/** What other features and the app may use from the reports feature. */

export * from '../../platform/config/render-config.ts';
export * from '../../platform/storage/report-storage.ts';
export * from './figures/render-svg.ts';
export * from './pdf/browser-pool.ts';
export * from './queue/in-process-worker.ts';
export * from './queue/render-pipeline.ts';
export * from './queue/render-queue.ts';
export * from './queue/render-report-job.ts';
export * from './queue/render-worker.ts';
export * from './queue/report-renderer.ts';
export * from './render/render-fixture.ts';
export * from './render/render-report.ts';
export * from './render/report-context.ts';
export * from './render/report-context-variables.ts';
export * from './render/template-engine.ts';
export * from './render/template-format.ts';
export * from './render/template-helpers.ts';
export { type PdfKind, versionPdf } from './report-download.ts';
export { listReports } from './report-history.ts';
export * from './report-routes.ts';
export { versionStandings } from './report-standing.ts';
export * from './report-templates.ts';
export * from './reports.ts';
