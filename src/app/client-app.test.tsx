import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { StrictMode } from 'react';
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

describe('an address under /app with no page', () => {
  it('names the section menu by name, not by where it sits (it is above the page when narrow)', async () => {
    window.history.replaceState(null, '', '/app/no-such-page');
    mockApi([]);
    renderWithQueries(<ClientApp />);
    const text = (await screen.findByText(/There is no page here/)).textContent;
    expect(text).toBe('There is no page here. Choose one in the section menu (My activity, Reports).');
    expect(text).not.toMatch(/\b(left|right|above|below)\b/);
  });
});

describe('moving to another page of the section', () => {
  it('focuses the new page’s heading; the first page shown takes no focus', async () => {
    window.history.replaceState(null, '', '/app/reports');
    mockApi([
      { path: '/api/reports/filter-options', respond: () => json(200, filterOptions) },
      { path: '/api/reports', respond: () => json(200, reportList) },
      { path: /^\/api\/(activity|me)/, respond: () => json(200, []) },
    ]);
    vi.spyOn(console, 'error').mockImplementation(() => {});
    // In StrictMode, as the islands mount: a development build runs the mount's effect twice.
    renderWithQueries(
      <StrictMode>
        <ClientApp />
      </StrictMode>,
    );
    await screen.findByRole('link', { name: 'RL-2026-0005' });
    expect(document.activeElement).toBe(document.body);

    fireEvent.click(within(screen.getByRole('navigation', { name: 'Section' })).getByText('My activity'));
    const heading = await screen.findByRole('heading', { level: 1, name: 'My activity' });
    await waitFor(() => expect(document.activeElement).toBe(heading));
    expect(heading.getAttribute('tabindex')).toBe('-1');
  });
});
