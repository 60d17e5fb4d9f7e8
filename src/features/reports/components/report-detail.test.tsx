import { screen, waitFor, within } from '@testing-library/react';
import { beforeEach, describe, expect, it } from 'vitest';
import ClientApp from '../../../app/client-app.tsx';
import { json, mockApi } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { readyReportDetail } from '../../../testing/report-fixtures.ts';

const me = {
  id: 3,
  fullName: 'Dr. Ana Ruiz',
  email: 'ana@lab.example',
  organisationId: 1,
  organisationName: 'Test Laboratory',
  roles: ['analyst'],
};

describe('one report under /app/reports/:id', () => {
  beforeEach(() => window.history.replaceState(null, '', '/app/reports/5'));

  it('shows each version’s review standing beside its render state; a signed version downloads signed', async () => {
    mockApi([
      { path: '/api/reports/5', respond: () => json(200, readyReportDetail) },
      { path: '/api/me', respond: () => json(200, me) },
    ]);
    renderWithQueries(<ClientApp />);

    const table = await screen.findByRole('table');
    const signedRow = table.querySelector('[data-version="1"]') as HTMLElement;
    const inReviewRow = table.querySelector('[data-version="2"]') as HTMLElement;
    expect(within(signedRow).getByText('Ready')).toBeDefined();
    expect(within(signedRow).getByText('Signed').getAttribute('data-review-state')).toBe('signed');
    expect(within(signedRow).getByRole('link', { name: 'Download signed PDF' }).getAttribute('href')).toBe(
      '/api/reports/5/versions/1/pdf',
    );
    expect(
      within(signedRow)
        .getByRole('link', { name: 'Unsigned rendition (PDF, not the signed record)' })
        .getAttribute('href'),
    ).toBe('/api/reports/5/versions/1/rendition.pdf');

    expect(within(inReviewRow).getByText('In review')).toBeDefined();
    expect(within(inReviewRow).queryByRole('link', { name: 'Download signed PDF' })).toBeNull();
    expect(within(inReviewRow).getByRole('link', { name: 'Download PDF (unsigned)' })).toBeDefined();
  });

  it('says in its live region when a render it saw running has finished, and nothing on a page opened finished', async () => {
    const rendering = {
      ...readyReportDetail,
      versions: readyReportDetail.versions.map((version) =>
        version.versionNumber === 2
          ? { ...version, renderStatus: 'rendering', pdfUrl: null, htmlUrl: null, finishedAt: null }
          : version,
      ),
    };
    let answers = 0;
    mockApi([
      { path: '/api/reports/5', respond: () => json(200, answers++ === 0 ? rendering : readyReportDetail) },
      { path: '/api/me', respond: () => json(200, me) },
    ]);
    const view = renderWithQueries(<ClientApp />);
    const live = await screen.findByText('Rendering — this page updates by itself.');
    expect(live.getAttribute('aria-live')).toBe('polite');
    await waitFor(
      () =>
        expect(live.textContent).toBe(
          'Version 2 is rendered and ready: download it, or open "Review and signing".',
        ),
      { timeout: 5_000 },
    );
    view.unmount();

    answers = 1;
    renderWithQueries(<ClientApp />);
    await screen.findByRole('table');
    expect(document.querySelector('[aria-live="polite"]')?.textContent).toBe('');
  });
});
