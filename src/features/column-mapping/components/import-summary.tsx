import type { ImportResponse } from '../../../../shared/api/uploads.ts';
import { RunAnalysisButton } from '../../studies/components/run-analysis-button.tsx';

/** What was stored: one line per series, the dataset hash, and the button to analyse it. */
export function ImportSummary({ result, studyId }: { result: ImportResponse; studyId: string }) {
  return (
    <section aria-labelledby="import-summary" className="rounded-md border border-ledger/40 bg-white p-5">
      <h2 id="import-summary" className="font-serif text-xl">
        Dataset #{result.datasetId} stored
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        {result.pointCount} points in {result.series.length} series · SHA-256{' '}
        <span className="font-mono text-xs">{result.sha256}</span>
        {result.savedMappingId !== null && ' · mapping saved for the next file of this layout'}
      </p>
      <table className="mt-4 w-full border-collapse text-sm">
        <thead>
          <tr className="border-b border-rule text-left">
            <th className="py-1 pr-4">Series</th>
            <th className="py-1 pr-4">Batch</th>
            <th className="py-1 pr-4 text-right">Temperature</th>
            <th className="py-1 pr-4 text-right">Points</th>
            <th className="py-1 pr-4 text-right">Times</th>
            <th className="py-1">Span</th>
          </tr>
        </thead>
        <tbody>
          {result.series.map((series) => (
            <tr key={series.id} className="border-b border-rule/60">
              <td className="py-1 pr-4 font-semibold">{series.id}</td>
              <td className="py-1 pr-4">{series.batch ?? '—'}</td>
              <td className="py-1 pr-4 text-right">
                {series.temperatureC === undefined ? '—' : `${series.temperatureC} °C`}
              </td>
              <td className="py-1 pr-4 text-right tabular-nums">{series.points}</td>
              <td className="py-1 pr-4 text-right tabular-nums">{series.distinctTimes}</td>
              <td className="py-1 tabular-nums">
                {series.firstTime}–{series.lastTime} {series.timeUnit}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {result.warnings.length > 0 && (
        <ul className="mt-3 space-y-1 text-sm text-ink-muted">
          {result.warnings.map((warning) => (
            <li key={warning}>Note: {warning}</li>
          ))}
        </ul>
      )}
      <div className="mt-5 flex flex-wrap items-start gap-4">
        <RunAnalysisButton datasetId={result.datasetId} label="Run the analysis" />
        <a className="py-1.5 text-sm underline" href={`/studies/${studyId}`}>
          Back to the study
        </a>
      </div>
    </section>
  );
}
