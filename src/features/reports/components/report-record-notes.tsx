import type { ReportDetail } from '../../../../shared/api/reports.ts';
import { utcTime } from './render-status.tsx';

/**
 * What the report page says about the records behind the report: retired (why, when, by whom),
 * or the study changed since its analysis (with a way to run the analysis again), and the offer to
 * retire a report made by mistake, for its author and admins (the server checks again and refuses
 * signed reports).
 */
export function ReportRecordNotes({
  detail,
  me,
}: {
  detail: ReportDetail;
  me: { id: number; roles: readonly string[] } | undefined;
}) {
  const changes = detail.studyChangedSince ?? [];
  const mayRetire =
    me !== undefined &&
    (me.roles.includes('admin') || (me.roles.includes('analyst') && me.id === detail.author.id));
  return (
    <>
      {detail.retirement && (
        <div role="status" className="mt-4 rounded-md border-l-4 border-alert bg-alert/5 px-4 py-3 text-sm">
          <p className="font-semibold text-alert">Retired</p>
          <p>
            Retired on {utcTime(detail.retirement.retiredAt)} by {detail.retirement.retiredBy}. Reason:{' '}
            {detail.retirement.reason}. It is kept, unchanged, with everything that refers to it.
          </p>
        </div>
      )}
      {changes.length > 0 && (
        <div role="status" className="mt-4 rounded-md border-l-4 border-alert bg-alert/5 px-4 py-3 text-sm">
          <p className="font-semibold text-alert">The study has changed since this analysis</p>
          <p>
            The report shows study version {detail.studyVersion}, the one its analysis was computed against.
            Since then:
          </p>
          <ul className="mt-1 list-disc pl-5">
            {changes.map((change) => (
              <li key={change}>{change}</li>
            ))}
          </ul>
          <p className="mt-1">
            <a className="font-semibold underline" href={`${detail.analysisUrl}#rerun`}>
              Run the analysis again
            </a>{' '}
            against the current study, then make a report from the new analysis.
          </p>
        </div>
      )}
      {mayRetire && !detail.retirement && (
        <p className="mt-2 text-sm">
          <a className="underline" href={`/retire/report/${detail.id}`}>
            Retire…
          </a>
        </p>
      )}
    </>
  );
}
