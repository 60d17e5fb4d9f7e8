import { act, screen, within } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { json, mockApi } from '../testing/api-mock.ts';
import '../testing/render.tsx';
import { mountIslands } from './mount-islands.tsx';

// The template editor's bundle cannot be loaded, as after a deployment replaced the hashed files
// (Vitest reports the rejection with its own message, so the test does not check the reason).
vi.mock('./template-editor-island.tsx', () =>
  Promise.reject(
    new TypeError('Failed to fetch dynamically imported module: /assets/template-editor-island-1a2b3c.js'),
  ),
);

let roots: ReturnType<typeof mountIslands> = [];

afterEach(() => {
  act(() => {
    for (const root of roots) root.unmount();
  });
  document.body.innerHTML = '';
});

function page(html: string) {
  document.body.innerHTML = html;
  act(() => {
    roots = mountIslands(document);
  });
}

describe('mounting the islands of a server-rendered page', () => {
  it('shows, in place of an island that fails, what failed and a reload, and mounts the others', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => {});
    mockApi([{ path: '/api/activity', respond: () => json(200, { events: [] }) }]);
    page(`
      <section aria-label="Editor"><div data-island="template-editor" data-template-id="2"></div></section>
      <section aria-label="Activity"><div data-island="recent-activity"></div></section>
      <section aria-label="Legacy"><div data-island="retired-widget"><p>Server-rendered</p></div></section>`);

    const editor = screen.getByRole('region', { name: 'Editor' });
    const alert = await within(editor).findByRole('alert');
    expect(within(alert).getByText('The template editor could not be shown.')).toBeDefined();
    expect(within(alert).getByRole('button', { name: 'Reload the page' })).toBeDefined();

    const activity = screen.getByRole('region', { name: 'Activity' });
    expect(await within(activity).findByText('No recorded activity yet.')).toBeDefined();
    expect(screen.getByRole('region', { name: 'Legacy' }).textContent).toBe('Server-rendered');
    expect(roots).toHaveLength(2);
  });
});
