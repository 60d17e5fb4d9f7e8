import { integer, pgTable, serial, text, unique } from 'drizzle-orm/pg-core';
import { analysisRuns } from './analysis-runs.ts';
import { createdAt } from './columns.ts';

/**
 * The report figures of an analysis run, drawn once (SVG) when a report of the run is first
 * rendered and kept beside the run, not inside its result: every later version and the signed
 * PDF print the same drawing, even after the figure code changes. Write-once (a trigger refuses
 * UPDATE, DELETE and TRUNCATE), like the run itself (ALCOA+ "original", "enduring").
 */
export const analysisRunFigures = pgTable(
  'analysis_run_figures',
  {
    id: serial('id').primaryKey(),
    analysisRunId: integer('analysis_run_id')
      .notNull()
      .references(() => analysisRuns.id),
    /** The figure's id in the run's figure list (`q1e-25`, `arrhenius`, `series-3-curves`). */
    figureId: text('figure_id').notNull(),
    /** The SVG as drawn, its ids prefixed `run-` (renamed per document when printed). */
    svg: text('svg').notNull(),
    createdAt: createdAt(),
  },
  (table) => [unique('analysis_run_figures_once').on(table.analysisRunId, table.figureId)],
);
