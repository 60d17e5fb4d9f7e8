import { useEffect, useRef, useState } from 'react';
import { Link, useParams } from 'react-router';
import { TableRegion } from '../../../components/table-region.tsx';
import { useDocumentTitle } from '../../../lib/document-title.ts';
import { useMe } from '../../session/api/get-me.ts';
import { useCreateReportVersion } from '../api/create-report-version.ts';
import { useReport } from '../api/get-report.ts';
import { isRendering } from '../api/report-keys.ts';
import { byteSize, RenderStatusBadge, ReviewStandingBadge, utcTime } from './render-status.tsx';
import { ReportRecordNotes } from './report-record-notes.tsx';

const PAPER_NAMES = { a4: 'A4', letter: 'US Letter' } as const;

/** One report: its versions with their render state (refreshing while one runs), preview and download. */
export function ReportDetail() {
  const reportId = Number(useParams().reportId);
  const report = useReport(reportId);
  const renderAgain = useCreateReportVersion(reportId);
  // Only analysts may render; the server enforces it, the button just does not offer it to others.
  const me = useMe().data;
  const canRender = me?.roles.includes('analyst') ?? false;
  useDocumentTitle(report.data ? `${report.data.reportNumber} ${report.data.title}` : 'Report');
  const finished = useRenderFinished(report.data?.versions);

  if (!Number.isInteger(reportId) || reportId <= 0) return <p role="alert">There is no such report.</p>;
  if (report.isPending) return <p className="text-ink-muted">Loading the report…</p>;
  if (report.isError)
    return (
      <p role="alert" className="text-alert">
        Could not load the report: {report.error.message}
      </p>
    );
  const data = report.data;
  const running = data.versions.some((version) => isRendering(version.renderStatus));

  return (
    <section>
      <p className="text-sm">
        <Link className="text-ledger underline" to="/reports">
          ← All reports
        </Link>
      </p>
      <h1 className="mt-2 font-serif text-2xl">
        <span className="tabular-nums">{data.reportNumber}</span> · {data.title}
      </h1>
      <dl className="mt-2 grid grid-cols-[max-content_1fr] gap-x-4 gap-y-0.5 text-sm">
        <dt className="text-ink-muted">Study</dt>
        <dd>
          {data.study.title} ({data.study.product})
        </dd>
        <dt className="text-ink-muted">Analysis</dt>
        <dd>
          <a className="text-ledger underline" href={data.analysisUrl}>
            Analysis {data.analysisRunId}
          </a>
        </dd>
        <dt className="text-ink-muted">Author</dt>
        <dd>{data.author.fullName}</dd>
        <dt className="text-ink-muted">Created</dt>
        <dd className="tabular-nums">{utcTime(data.createdAt)}</dd>
      </dl>
      <ReportRecordNotes detail={data} me={me} />

      <div className="mt-4 flex items-center gap-3">
        <h2 className="font-serif text-lg">Versions</h2>
        {canRender && (
          <button
            type="button"
            className="rounded-sm border border-ledger px-2 py-1 text-sm text-ledger hover:bg-paper disabled:opacity-40"
            disabled={renderAgain.isPending}
            onClick={() => renderAgain.mutate({})}
          >
            Render a new version
          </button>
        )}
        <span aria-live="polite" className="text-sm text-ink-muted">
          {running ? 'Rendering — this page updates by itself.' : finished}
        </span>
      </div>
      {renderAgain.isError && (
        <p role="alert" className="mt-1 text-sm text-alert">
          {renderAgain.error.message}
        </p>
      )}

      <TableRegion label="Each version of this report" className="mt-2">
        <table className="w-full rounded-md border border-rule bg-white text-sm">
          <thead>
            <tr className="border-b border-rule text-left">
              <th className="px-2 py-1">Version</th>
              <th className="px-2 py-1">Render</th>
              <th className="px-2 py-1">Review</th>
              <th className="px-2 py-1">Paper</th>
              <th className="px-2 py-1">Pages</th>
              <th className="px-2 py-1">Requested</th>
              <th className="px-2 py-1">Finished</th>
              <th className="px-2 py-1">Output</th>
            </tr>
          </thead>
          <tbody>
            {[...data.versions].reverse().map((version) => (
              <tr
                key={version.versionNumber}
                className="border-b border-rule/50 align-top"
                data-version={version.versionNumber}
              >
                <td className="px-2 py-1.5 tabular-nums">
                  v{version.versionNumber}
                  <div className="text-xs text-ink-muted">
                    analysis {version.analysisRunId} · template v{version.templateVersionNumber}
                  </div>
                </td>
                <td className="px-2 py-1.5">
                  <RenderStatusBadge status={version.renderStatus} />
                  {version.renderAttempts > 1 && (
                    <div className="text-xs text-ink-muted">{version.renderAttempts} attempts</div>
                  )}
                  {version.failureReason && (
                    <p className="mt-1 max-w-md text-xs text-alert">{version.failureReason}</p>
                  )}
                </td>
                <td className="px-2 py-1.5">
                  <ReviewStandingBadge standing={version.reviewState} supersededBy={version.supersededBy} />
                </td>
                <td className="px-2 py-1.5">{PAPER_NAMES[version.paperSize]}</td>
                <td className="px-2 py-1.5 tabular-nums">
                  {version.pageCount ?? '—'}
                  {version.pdfByteSize !== null && (
                    <div className="text-xs text-ink-muted">{byteSize(version.pdfByteSize)}</div>
                  )}
                </td>
                <td className="px-2 py-1.5 tabular-nums">
                  {utcTime(version.createdAt)}
                  <div className="text-xs text-ink-muted">{version.requestedBy.fullName}</div>
                </td>
                <td className="px-2 py-1.5 tabular-nums">{utcTime(version.finishedAt)}</td>
                <td className="px-2 py-1.5">
                  {version.pdfUrl && version.htmlUrl ? (
                    <div className="flex flex-col gap-0.5">
                      {version.signedPdfSha256 ? (
                        <>
                          <a className="font-semibold text-ledger underline" href={version.pdfUrl} download>
                            Download signed PDF
                          </a>
                          {version.renditionUrl && (
                            <a className="text-ledger underline" href={version.renditionUrl} download>
                              Unsigned rendition (PDF, not the signed record)
                            </a>
                          )}
                        </>
                      ) : (
                        <a className="text-ledger underline" href={version.pdfUrl} download>
                          Download PDF (unsigned)
                        </a>
                      )}
                      <a
                        className="font-semibold text-ledger underline"
                        href={`/review/reports/${data.id}/versions/${version.versionNumber}`}
                      >
                        Review and signing →
                      </a>
                      <a
                        className="text-ledger underline"
                        href={version.htmlUrl}
                        target="_blank"
                        rel="noopener noreferrer"
                      >
                        Preview (HTML)
                      </a>
                      {version.pdfSha256 && (
                        <span
                          className="font-mono text-[10px] text-ink-muted"
                          title="SHA-256 of the stored PDF"
                        >
                          SHA-256 {version.pdfSha256.slice(0, 16)}…
                        </span>
                      )}
                      {version.signedPdfSha256 && (
                        <span
                          className="font-mono text-[10px] text-ink-muted"
                          title="SHA-256 of the signed PDF"
                        >
                          signed SHA-256 {version.signedPdfSha256.slice(0, 16)}…
                        </span>
                      )}
                    </div>
                  ) : (
                    '—'
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </TableRegion>
      <p className="mt-4 text-xs text-ink-muted">
        The estimates in a report support, and do not replace, the judgement of qualified people, applicable
        guidance and your laboratory's approved procedures.
      </p>
    </section>
  );
}

type VersionState = { versionNumber: number; renderStatus: string; failureReason: string | null };

/**
 * What the live region says once a render seen running on this page has finished (WCAG 4.1.3):
 * the badge in the table changes silently, so without it a screen reader hears "Rendering…"
 * and then nothing. Empty until a render was seen running.
 */
function useRenderFinished(versions: readonly VersionState[] | undefined): string {
  const [message, setMessage] = useState('');
  const wasRunning = useRef(false);
  const running = versions?.some((version) => isRendering(version.renderStatus)) ?? false;
  const latest = versions?.reduce<VersionState | null>(
    (last, version) => (last && last.versionNumber > version.versionNumber ? last : version),
    null,
  );
  useEffect(() => {
    if (running) {
      wasRunning.current = true;
      setMessage('');
    } else if (wasRunning.current && latest) {
      wasRunning.current = false;
      setMessage(
        latest.renderStatus === 'ready'
          ? `Version ${latest.versionNumber} is rendered and ready: download it, or open "Review and signing".`
          : `Version ${latest.versionNumber} could not be rendered${latest.failureReason ? `: ${latest.failureReason}` : '.'}`,
      );
    }
  }, [running, latest]);
  return message;
}
