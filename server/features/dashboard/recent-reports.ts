import { REVIEW_STANDING_LABELS } from '../../../shared/api/report-standing.ts';
import { reportListQuerySchema } from '../../../shared/api/reports.ts';
import type { Executor } from '../../platform/db/client.ts';
import { listReports } from '../reports/index.ts';

const RENDER_WORDS = { queued: 'Queued', rendering: 'Rendering', ready: 'Ready', failed: 'Failed' } as const;

/**
 * The organisation's five newest reports for the dashboard, each with its latest version's
 * render state and review standing side by side (a READY version may still be a draft).
 */
export async function recentReports(db: Executor, organisationId: number) {
  const list = await listReports(db, organisationId, reportListQuerySchema.parse({ pageSize: 5 }));
  return list.items.map((item) => ({
    href: `/app/reports/${item.id}`,
    reportNumber: item.reportNumber,
    title: item.title,
    versionNumber: item.latest.versionNumber,
    renderStatus: item.latest.renderStatus,
    renderText: RENDER_WORDS[item.latest.renderStatus],
    reviewState: item.latest.reviewState,
    reviewText: REVIEW_STANDING_LABELS[item.latest.reviewState],
    signed: item.latest.reviewState === 'signed',
  }));
}
