import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { beforeEach, describe, expect, it } from 'vitest';
import ClientApp from '../../../app/client-app.tsx';
import { json, mockApi, refusal } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { failedReportList, filterOptions, reportList } from '../../../testing/report-fixtures.ts';

const filterOptionsRoute = { path: '/api/reports/filter-options', respond: () => json(200, filterOptions) };

describe('the report history under /app/reports', () => {
  beforeEach(() => window.history.replaceState(null, '', '/app/reports'));

  it('lists the reports with their latest version, state and download', async () => {
    mockApi([filterOptionsRoute, { path: '/api/reports', respond: () => json(200, reportList) }]);
    renderWithQueries(<ClientApp />);

    expect(screen.getByRole('heading', { name: 'Reports' })).toBeDefined();
    const table = await screen.findByRole('table');
    const [, failedRow, readyRow] = within(table).getAllByRole('row');
    expect(within(readyRow!).getByRole('link', { name: 'RL-2026-0005' }).getAttribute('href')).toBe(
      '/app/reports/5',
    );
    expect(readyRow?.textContent).toContain('Shelf-life of batch B001');
    expect(readyRow?.textContent).toContain('Dr. Ana Ruiz');
    expect(readyRow?.textContent).toContain('2026-03-01 08:30 UTC');
    expect(readyRow?.textContent).toContain('(2 versions)');
    expect(within(readyRow!).getByText('Ready')).toBeDefined();
    expect(within(readyRow!).getByText('In review').getAttribute('data-review-state')).toBe('in_review');
    expect(within(failedRow!).getByText('Draft')).toBeDefined();
    expect(within(readyRow!).getByRole('link', { name: 'Download' }).getAttribute('href')).toBe(
      '/api/reports/5/versions/2/pdf',
    );
    expect(within(failedRow!).getByText('Failed')).toBeDefined();
    expect(within(failedRow!).queryByRole('link', { name: 'Download' })).toBeNull();
    expect(screen.getByRole('navigation', { name: 'Pages' }).textContent).toContain(
      'Page 1 of 1 · 2 reports',
    );
  });

  it('filters on the server and keeps the filter in the address', async () => {
    const requests = mockApi([
      filterOptionsRoute,
      {
        path: '/api/reports',
        respond: ({ url }) =>
          json(200, url.searchParams.get('status') === 'failed' ? failedReportList : reportList),
      },
    ]);
    renderWithQueries(<ClientApp />);
    await screen.findByRole('link', { name: 'RL-2026-0005' });

    fireEvent.change(screen.getByLabelText('Status'), { target: { value: 'failed' } });

    expect(await screen.findByText(/1 report$/)).toBeDefined();
    expect(screen.queryByRole('link', { name: 'RL-2026-0005' })).toBeNull();
    expect(screen.getByRole('link', { name: 'RL-2026-0006' })).toBeDefined();
    expect(window.location.search).toBe('?status=failed');
    const last = requests.filter((request) => request.url.pathname === '/api/reports').at(-1);
    expect(last?.url.searchParams.get('status')).toBe('failed');
    expect(screen.getByRole('button', { name: 'Clear filters' })).toBeDefined();
  });

  it('says in a status message what the list holds after a filter changes, and nothing before', async () => {
    mockApi([
      filterOptionsRoute,
      {
        path: '/api/reports',
        respond: ({ url }) =>
          json(200, url.searchParams.get('status') === 'failed' ? failedReportList : reportList),
      },
    ]);
    renderWithQueries(<ClientApp />);
    await screen.findByRole('link', { name: 'RL-2026-0005' });
    const status = screen.getByRole('status');
    expect(status.textContent).toBe('');

    fireEvent.change(screen.getByLabelText('Status'), { target: { value: 'failed' } });
    await waitFor(() => expect(status.textContent).toBe('1 report matches.'));

    fireEvent.click(screen.getByRole('button', { name: 'Clear filters' }));
    await waitFor(() => expect(status.textContent).toBe('2 reports match.'));
  });

  it('offers the authors the server names as a filter', async () => {
    mockApi([filterOptionsRoute, { path: '/api/reports', respond: () => json(200, reportList) }]);
    renderWithQueries(<ClientApp />);

    const author = screen.getByLabelText('Author');
    await within(author).findByRole('option', { name: 'Ben Okafor' });
    expect(
      within(author)
        .getAllByRole('option')
        .map((option) => option.textContent),
    ).toEqual(['Anyone', 'Dr. Ana Ruiz', 'Ben Okafor']);
  });

  it('says what went wrong when the list cannot be loaded', async () => {
    mockApi([
      filterOptionsRoute,
      {
        path: '/api/reports',
        respond: () =>
          refusal(
            500,
            'An unexpected error stopped this request. It has been logged; nothing was saved half-way.',
          ),
      },
    ]);
    renderWithQueries(<ClientApp />);

    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toBe(
      'Could not load the reports: An unexpected error stopped this request. It has been logged; nothing was saved half-way.',
    );
  });
});
