import { render, screen } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { readyReportDetail } from '../../../testing/report-fixtures.ts';
import { ReportRecordNotes } from './report-record-notes.tsx';

/** What the report page says about a changed study and a retired report, and who is offered "Retire…". */
describe('the notes on a report page', () => {
  it('says the study changed since, with each change and a way to run the analysis again', () => {
    const detail = {
      ...readyReportDetail,
      studyVersion: 1,
      studyChangedSince: [
        'Version 2: lower limit 95 → 90, on 2026-12-03 17:00:00 UTC, by Test analyst, reason: CC-0043',
      ],
    };
    render(<ReportRecordNotes detail={detail} me={{ id: 999_999, roles: ['reviewer'] }} />);
    expect(screen.getByText('The study has changed since this analysis')).toBeDefined();
    expect(screen.getByText(/lower limit 95 → 90/)).toBeDefined();
    expect(screen.getByRole('link', { name: 'Run the analysis again' }).getAttribute('href')).toBe(
      `${detail.analysisUrl}#rerun`,
    );
    // A reviewer is not offered retirement.
    expect(screen.queryByRole('link', { name: 'Retire…' })).toBeNull();
  });

  it('offers "Retire…" to the author and admins, and shows a retirement instead once retired', () => {
    const { rerender } = render(
      <ReportRecordNotes
        detail={readyReportDetail}
        me={{ id: readyReportDetail.author.id, roles: ['analyst'] }}
      />,
    );
    expect(screen.getByRole('link', { name: 'Retire…' }).getAttribute('href')).toBe(
      `/retire/report/${readyReportDetail.id}`,
    );
    rerender(<ReportRecordNotes detail={readyReportDetail} me={{ id: 999_999, roles: ['analyst'] }} />);
    expect(screen.queryByRole('link', { name: 'Retire…' })).toBeNull();
    const retired = {
      ...readyReportDetail,
      retirement: {
        reason: 'Wrong analysis (invented).',
        retiredAt: '2026-12-03T17:00:00.000Z',
        retiredBy: 'Test admin',
      },
    };
    rerender(<ReportRecordNotes detail={retired} me={{ id: 999_999, roles: ['admin'] }} />);
    expect(screen.getByText(/Reason: Wrong analysis \(invented\)\./)).toBeDefined();
    expect(screen.queryByRole('link', { name: 'Retire…' })).toBeNull();
  });
});
