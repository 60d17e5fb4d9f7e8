import { useAnalysisFigures } from '../features/analysis/api/get-analysis-figures.ts';
import { VegaFigure } from '../features/analysis/components/vega-figure.tsx';
import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';

/** One figure of the analysis screen: `data-figure-id` names it, `data-figures-url` where the specs are. */
export default function AnalysisFigureIsland() {
  const { ref, data } = useIslandDataset();
  const query = useAnalysisFigures(data?.figuresUrl);
  const figure = query.data?.figures.find((candidate) => candidate.id === data?.figureId);
  return (
    <div ref={ref}>
      {query.isPending && <p className="text-sm text-ink-muted">Loading the figure…</p>}
      {query.isError && (
        <p className="text-sm text-alert" role="alert">
          The figures could not be loaded: {query.error.message}
        </p>
      )}
      {query.isSuccess && !figure && <p className="text-sm text-ink-muted">This figure is not available.</p>}
      {figure && <VegaFigure spec={figure.spec} title={figure.title} />}
    </div>
  );
}
