import { useRunAnalysis } from '../api/run-analysis.ts';

/** Starts an analysis of a stored dataset and opens it; a failure is shown beside the button. */
export function RunAnalysisButton({
  datasetId,
  label = 'Run analysis',
}: {
  datasetId: number | string;
  label?: string;
}) {
  const run = useRunAnalysis();
  return (
    <span className="inline-flex flex-col items-end gap-1">
      <button
        type="button"
        onClick={() => run.mutate(datasetId)}
        disabled={run.isPending || run.isSuccess}
        className="rounded-sm bg-ledger px-3 py-1.5 text-sm font-semibold text-white hover:bg-ledger-dark disabled:opacity-60"
      >
        {run.isPending ? 'Running…' : run.isSuccess ? 'Opening…' : label}
      </button>
      {run.isError && (
        <span role="alert" className="max-w-sm text-left text-sm text-alert">
          {run.error.message}
        </span>
      )}
    </span>
  );
}
