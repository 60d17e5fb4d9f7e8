/**
 * An analysis run's report figures, drawn once and kept beside the run (`analysis_run_figures`):
 * the first render of a report of the run draws what is missing and stores it in the render's
 * own transaction; every later version, the signed PDF and a re-render after the figure code
 * changed print the stored drawing. A run is write-once, so its picture is too.
 *
 * Two renders of the same run at once store one drawing: the insert skips a figure already there
 * and the stored one is read back.
 *
 * A run of several attributes keeps every attribute's figures the same way; their ids are unique
 * per attribute ('attribute-2-q1e-25', `report-figures.ts`), and a run of one attribute keeps the
 * ids it always had.
 *
 * Example: `await runFigureSvgs(tx, run.id, figures)` gives a Map from 'q1e-25' to '<svg …>'.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { TopLevelSpec } from 'vega-lite';
import type { FigureSpec } from '../../../../shared/figures/analysis-figures.ts';
import type { Executor } from '../../../platform/db/client.ts';
import { analysisRunFigures } from '../../../platform/db/schema/index.ts';
import { renderSvg } from '../figures/render-svg.ts';

/** The prefix stored drawings carry on their ids; `renderFigureMarkup` renames it per document. */
export const STORED_FIGURE_PREFIX = 'run';

export async function runFigureSvgs(
  tx: Executor,
  runId: number,
  figures: readonly Pick<FigureSpec, 'id' | 'title' | 'description' | 'spec'>[],
): Promise<Map<string, string>> {
  const ids = figures.map((figure) => figure.id);
  const read = async () =>
    ids.length === 0
      ? []
      : tx
          .select({ figureId: analysisRunFigures.figureId, svg: analysisRunFigures.svg })
          .from(analysisRunFigures)
          .where(and(eq(analysisRunFigures.analysisRunId, runId), inArray(analysisRunFigures.figureId, ids)));
  const stored = new Map((await read()).map((row) => [row.figureId, row.svg]));
  const missing = figures.filter((figure) => !stored.has(figure.id));
  if (missing.length === 0) return stored;
  const drawn: { analysisRunId: number; figureId: string; svg: string }[] = [];
  for (const figure of missing) {
    const svg = await renderSvg(figure.spec as unknown as TopLevelSpec, {
      idPrefix: STORED_FIGURE_PREFIX,
      title: figure.title,
      description: figure.description,
    });
    drawn.push({ analysisRunId: runId, figureId: figure.id, svg });
  }
  await tx.insert(analysisRunFigures).values(drawn).onConflictDoNothing();
  return new Map((await read()).map((row) => [row.figureId, row.svg]));
}
