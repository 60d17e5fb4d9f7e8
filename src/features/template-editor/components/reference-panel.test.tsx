import { cleanup, fireEvent, render, screen, within } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { ReferencePanel } from './reference-panel.tsx';

const variables = [
  { path: 'report.number', description: 'The report number', insert: '{{report.number}}' },
  { path: 'study.title', description: 'The study title', insert: '{{study.title}}' },
];
const helpers = [{ name: 'each', usage: '{{#each list}}…{{/each}}', description: 'Repeats for each item' }];

afterEach(cleanup);

function renderPanel(onInsert = vi.fn()) {
  render(
    <ReferencePanel
      variables={variables}
      helpers={helpers}
      examples={{ 'report.number': 'RL-2026-0005' }}
      onInsert={onInsert}
    />,
  );
  return onInsert;
}

describe('the reference panel of the template editor (issue 17)', () => {
  it('its panel holds a real list; each entry is a button named "Insert <path>" and described by its text', () => {
    const onInsert = renderPanel();
    const panel = screen.getByRole('tabpanel', { name: 'Variables (2)' });
    expect(panel.getAttribute('tabindex')).toBe('0');
    const list = within(panel).getByRole('list');
    expect(within(list).getAllByRole('listitem')).toHaveLength(2);
    const button = within(panel).getByRole('button', { name: 'Insert report.number' });
    const description = document.getElementById(button.getAttribute('aria-describedby')!);
    expect(description?.textContent).toBe('The report numbere.g. RL-2026-0005');
    fireEvent.click(button);
    expect(onInsert).toHaveBeenCalledWith('{{report.number}}');
  });

  it('arrow keys, Home and End move between the tabs; only the selected tab is in the Tab order', () => {
    renderPanel();
    const variablesTab = screen.getByRole('tab', { name: 'Variables (2)' });
    const helpersTab = screen.getByRole('tab', { name: 'Helpers (1)' });
    expect([variablesTab.tabIndex, helpersTab.tabIndex]).toEqual([0, -1]);
    expect(variablesTab.getAttribute('aria-controls')).toBe(screen.getByRole('tabpanel').id);

    variablesTab.focus();
    fireEvent.keyDown(variablesTab, { key: 'ArrowRight' });
    expect(screen.getByRole('tab', { selected: true })).toBe(helpersTab);
    expect(document.activeElement).toBe(helpersTab);
    expect([variablesTab.tabIndex, helpersTab.tabIndex]).toEqual([-1, 0]);
    expect(screen.getByRole('button', { name: 'Insert helper each' })).toBeDefined();

    fireEvent.keyDown(helpersTab, { key: 'Home' });
    expect(document.activeElement).toBe(variablesTab);
    fireEvent.keyDown(variablesTab, { key: 'ArrowLeft' });
    expect(document.activeElement).toBe(helpersTab);
    // Other keys are left to the browser.
    fireEvent.keyDown(helpersTab, { key: 'a' });
    expect(screen.getByRole('tab', { selected: true })).toBe(helpersTab);
  });
});
