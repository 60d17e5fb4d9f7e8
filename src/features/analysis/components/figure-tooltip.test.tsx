import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createFigureTooltip, type FigureTooltip, HIDE_DELAY_MS, TOOLTIP_ID } from './figure-tooltip.ts';

/**
 * WCAG 2.1 SC 1.4.13 on the analysis figures (docs/accessibility-review.md): the tooltip is
 * dismissible (Escape), hoverable (the pointer can move onto it) and persistent. vega calls the
 * handler with the mark's tooltip value on each pointer move over a mark, and with null when the
 * pointer leaves it; these tests call it as vega does.
 */

const pointAt = (clientX: number, clientY: number) => new MouseEvent('pointermove', { clientX, clientY });
const point3 = { datum: 3 };
const point4 = { datum: 4 };
const value3 = { Time: '3 months', value: '99.2 %' };
const value4 = { Time: '6 months', value: '98.4 %' };

let tooltip: FigureTooltip;
const element = () => document.getElementById(TOOLTIP_ID);
const visible = () => element()?.classList.contains('visible') === true;
const pressEscape = () =>
  document.body.dispatchEvent(new KeyboardEvent('keydown', { key: 'Escape', bubbles: true }));

beforeEach(() => {
  vi.useFakeTimers();
  tooltip = createFigureTooltip();
});
afterEach(() => {
  tooltip.destroy();
  vi.useRealTimers();
});

describe('the figure tooltip', () => {
  it('shows the mark’s values as text in a table, beside the pointer', () => {
    tooltip.handler(null, pointAt(100, 80), point3, { ...value3, Note: '<b>not markup</b>' });
    expect(visible()).toBe(true);
    expect(element()?.getAttribute('role')).toBe('tooltip');
    const cells = [...(element()?.querySelectorAll('td') ?? [])].map((cell) => cell.textContent);
    expect(cells).toEqual(['Time', '3 months', 'value', '99.2 %', 'Note', '<b>not markup</b>']);
    expect(element()?.querySelector('b')).toBeNull();
    expect(element()?.style.left).toBe('110px');
    expect(element()?.style.top).toBe('90px');
  });

  it('Escape hides it without the pointer or focus moving, and it stays hidden on that mark', () => {
    const field = document.createElement('input');
    document.body.appendChild(field);
    field.focus();
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    expect(visible()).toBe(true);

    pressEscape();
    expect(visible()).toBe(false);
    expect(document.activeElement).toBe(field);
    // The pointer moves on over the same mark: vega asks again, the dismissed tooltip stays away.
    tooltip.handler(null, pointAt(102, 81), point3, value3);
    expect(visible()).toBe(false);
    // Another mark shows its own.
    tooltip.handler(null, pointAt(140, 90), point4, value4);
    expect(visible()).toBe(true);
    expect(element()?.textContent).toContain('98.4 %');
    field.remove();
  });

  it('after Escape, leaving the mark and coming back shows it again', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    pressEscape();
    tooltip.handler(null, pointAt(120, 80), point3, null);
    tooltip.handler(null, pointAt(101, 80), point3, value3);
    expect(visible()).toBe(true);
  });

  it('Escape with no tooltip shown does nothing', () => {
    pressEscape();
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    expect(visible()).toBe(true);
  });

  it('is hoverable: the pointer leaves the mark for the tooltip, and it stays while the pointer is on it', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    // While the pointer moves on the mark towards it, the tooltip does not move away.
    tooltip.handler(null, pointAt(104, 84), point3, value3);
    expect(element()?.style.left).toBe('110px');
    tooltip.handler(null, pointAt(106, 86), point3, null);
    vi.advanceTimersByTime(HIDE_DELAY_MS / 2);
    element()?.dispatchEvent(new Event('pointerenter'));
    vi.advanceTimersByTime(HIDE_DELAY_MS * 10);
    expect(visible()).toBe(true);

    element()?.dispatchEvent(new Event('pointerleave'));
    vi.advanceTimersByTime(HIDE_DELAY_MS - 1);
    expect(visible()).toBe(true);
    vi.advanceTimersByTime(1);
    expect(visible()).toBe(false);
  });

  it('stays when the browser reports the pointer on the tooltip before vega says the mark was left', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    // Chromium's order on one move: pointerenter (the tooltip), then mouseout (the mark: vega's "hide").
    element()?.dispatchEvent(new Event('pointerenter'));
    tooltip.handler(null, pointAt(112, 92), point3, null);
    vi.advanceTimersByTime(HIDE_DELAY_MS * 10);
    expect(visible()).toBe(true);
    pressEscape();
    expect(visible()).toBe(false);
  });

  it('is persistent: it stays while the pointer is on the mark, and goes once the pointer has left both', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    vi.advanceTimersByTime(60_000);
    expect(visible()).toBe(true);
    tooltip.handler(null, pointAt(120, 80), point3, null);
    vi.advanceTimersByTime(HIDE_DELAY_MS - 1);
    expect(visible()).toBe(true);
    vi.advanceTimersByTime(1);
    expect(visible()).toBe(false);
  });

  it('moving straight to the next mark shows that mark’s values where the pointer is', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    tooltip.handler(null, pointAt(120, 80), point3, null);
    tooltip.handler(null, pointAt(140, 90), point4, value4);
    vi.advanceTimersByTime(HIDE_DELAY_MS * 2);
    expect(visible()).toBe(true);
    expect(element()?.textContent).toContain('6 months');
    expect(element()?.style.left).toBe('150px');
  });

  it('opens on the other side of the pointer when it would leave the window', () => {
    const pointer = pointAt(window.innerWidth - 5, window.innerHeight - 5);
    vi.spyOn(HTMLElement.prototype, 'getBoundingClientRect').mockReturnValue(
      DOMRect.fromRect({ width: 120, height: 40 }),
    );
    tooltip.handler(null, pointer, point3, value3);
    expect(element()?.style.left).toBe(`${window.innerWidth - 5 - 10 - 120}px`);
    expect(element()?.style.top).toBe(`${window.innerHeight - 5 - 10 - 40}px`);
    vi.restoreAllMocks();
  });

  it('destroy removes the element and stops listening for Escape', () => {
    tooltip.handler(null, pointAt(100, 80), point3, value3);
    tooltip.destroy();
    expect(element()).toBeNull();
    tooltip = createFigureTooltip();
  });
});
