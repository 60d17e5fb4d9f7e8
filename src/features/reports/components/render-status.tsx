import { type ReviewStandingName, reviewStandingText } from '../../../../shared/api/report-standing.ts';
import type { RenderStatus } from '../../../../shared/api/reports.ts';

const LABELS: Record<RenderStatus, string> = {
  queued: 'Queued',
  rendering: 'Rendering…',
  ready: 'Ready',
  failed: 'Failed',
};

const STYLES: Record<RenderStatus, string> = {
  queued: 'border-rule text-ink-muted',
  rendering: 'border-ledger text-ledger',
  ready: 'border-ledger bg-ledger text-white',
  failed: 'border-alert text-alert',
};

/** The render state in words (never colour alone), announced politely while it changes. */
export function RenderStatusBadge({ status }: { status: RenderStatus }) {
  return (
    <span
      className={`inline-block rounded-sm border px-1.5 py-0.5 text-xs font-semibold uppercase tracking-wider ${STYLES[status]}`}
      data-status={status}
    >
      {LABELS[status]}
    </span>
  );
}

const REVIEW_STYLES: Record<ReviewStandingName, string> = {
  draft: 'border-rule text-ink-muted',
  in_review: 'border-ledger text-ledger',
  returned: 'border-alert text-alert',
  signed: 'border-ledger bg-ledger text-white',
  superseded: 'border-rule bg-paper text-ink-muted',
};

/** Where the version stands in review, in words, beside its render state. */
export function ReviewStandingBadge({
  standing,
  supersededBy = null,
}: {
  standing: ReviewStandingName;
  supersededBy?: number | null;
}) {
  return (
    <span
      className={`inline-block rounded-sm border px-1.5 py-0.5 text-xs font-semibold tracking-wide ${REVIEW_STYLES[standing]}`}
      data-review-state={standing}
    >
      {reviewStandingText(standing, supersededBy)}
    </span>
  );
}

/** "2026-12-01 14:05 UTC" from an ISO string. */
export function utcTime(iso: string | null): string {
  return iso ? `${iso.replace('T', ' ').slice(0, 16)} UTC` : '—';
}

export function byteSize(bytes: number | null): string {
  if (bytes === null) return '—';
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(0)} kB`;
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}
