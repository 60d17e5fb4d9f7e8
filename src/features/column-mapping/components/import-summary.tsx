import { useEffect, useRef, useState } from 'react';
import type { ImportResponse } from '../../../../shared/api/uploads.ts';
import { TableRegion } from '../../../components/table-region.tsx';
import { RunAnalysisButton } from '../../studies/components/run-analysis-button.tsx';

/** Long enough for the empty live region to be in the accessibility tree before it is filled. */
const ANNOUNCE_DELAY_MS = 100;

/**
 * What was stored: one line per series, the dataset hash, and the button to analyse it.
 *
 * It replaces the workbench the person was working in, so focus would fall to <body>: it moves
 * to the summary's heading instead (WCAG 2.4.3 Focus Order), and a polite live region says what
 * happened (4.1.3 Status Messages). The region is in the page empty first and filled a moment
 * later, because screen readers announce changes to a live region, not a region that arrives full.
 */
export function ImportSummary({ result, studyId }: { result: ImportResponse; studyId: string }) {
  const heading = useRef<HTMLHeadingElement>(null);
  const [announcement, setAnnouncement] = useState('');
  const message = `Dataset #${result.datasetId} stored: ${result.pointCount} points in ${result.series.length} series. Next: run the analysis.`;
  useEffect(() => {
    heading.current?.focus();
    const timer = window.setTimeout(() => setAnnouncement(message), ANNOUNCE_DELAY_MS);
    return () => window.clearTimeout(timer);
  }, [message]);

  return (
    <section aria-labelledby="import-summary" className="rounded-md border border-ledger/40 bg-white p-5">
      <p role="status" aria-live="polite" className="sr-only">
        {announcement}
      </p>
      <h2 id="import-summary" ref={heading} tabIndex={-1} className="font-serif text-xl">
        Dataset #{result.datasetId} stored
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        {result.pointCount} points in {result.series.length} series · SHA-256{' '}
        <span className="break-all font-mono text-xs">{result.sha256}</span>
        {result.savedMappingId !== null && ' · mapping saved for the next file of this layout'}
      </p>
      <TableRegion label="Series imported" className="mt-4">
        <table className="w-full border-collapse text-sm">
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
      </TableRegion>
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
