import { fireEvent, screen, within } from '@testing-library/react';
import { describe, expect, it, vi } from 'vitest';
import { json, mockApi } from '../testing/api-mock.ts';
import { renderWithQueries } from '../testing/render.tsx';
import { filterOptions, reportList } from '../testing/report-fixtures.ts';
import ClientApp from './client-app.tsx';

// The report page fails while it renders, as a bug would make it.
vi.mock('../features/reports/components/report-detail.tsx', () => ({
  ReportDetail: () => {
    throw new TypeError("Cannot read properties of undefined (reading 'versions')");
  },
}));

describe('a route of the client section that fails', () => {
  it('names what failed, offers a reload, and leaves the rest of the section working', async () => {
    window.history.replaceState(null, '', '/app/reports');
    mockApi([
      { path: '/api/reports/filter-options', respond: () => json(200, filterOptions) },
      { path: '/api/reports', respond: () => json(200, reportList) },
    ]);
    vi.spyOn(console, 'error').mockImplementation(() => {});
    renderWithQueries(<ClientApp />);

    fireEvent.click(await screen.findByRole('link', { name: 'RL-2026-0005' }));

    const alert = screen.getByRole('alert');
    expect(within(alert).getByText('The report could not be shown.')).toBeDefined();
    expect(alert.textContent).toContain("Cannot read properties of undefined (reading 'versions')");
    expect(within(alert).getByRole('button', { name: 'Reload the page' })).toBeDefined();
    expect(window.location.pathname).toBe('/app/reports/5');

    fireEvent.click(within(screen.getByRole('navigation', { name: 'Section' })).getByText('Reports'));

    expect(await screen.findByRole('link', { name: 'RL-2026-0006' })).toBeDefined();
    expect(screen.queryByText('The report could not be shown.')).toBeNull();
  });
});
