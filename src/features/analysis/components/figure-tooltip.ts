/**
 * The figures' tooltip: a vega tooltip handler (vega-embed's `tooltip` option) that meets WCAG 2.1
 * SC 1.4.13 Content on Hover or Focus (https://www.w3.org/WAI/WCAG21/Understanding/content-on-hover-or-focus):
 *
 * - dismissible: Escape hides it, wherever focus and the pointer are; it stays hidden while the
 *   pointer stays on the same mark, and comes back once the pointer goes to another;
 * - hoverable: it opens beside the pointer and stays where it opened while the pointer moves
 *   on the mark, and the pointer can move onto it: vega says "hide" as the pointer leaves the
 *   mark, and that waits HIDE_DELAY_MS, and never happens while the pointer is on the tooltip;
 * - persistent: it goes only when the pointer has left both the mark and the tooltip, or on Escape.
 *
 * vega-tooltip (vega-embed's default) hides at once on leaving the mark, moves with the pointer and
 * ignores Escape (docs/accessibility-review.md), hence this small handler. It keeps vega-tooltip's
 * element id and markup (`#vg-tooltip-element`, `.visible`, a table of `td.key`/`td.value`), so
 * `vega-figure.css` styles it; the content is written as text, never as HTML.
 */

/** The element's id, as vega-tooltip names it (styled in vega-figure.css). */
export const TOOLTIP_ID = 'vg-tooltip-element';
/** How long the tooltip waits, after the pointer left its mark, for the pointer to reach it. */
export const HIDE_DELAY_MS = 400;
/** Distance of the tooltip from the pointer, in CSS pixels. */
const OFFSET_PX = 10;

/** vega's tooltip handler signature (vega-typings `TooltipHandler`). */
export type FigureTooltipHandler = (
  handler: unknown,
  event: MouseEvent,
  item: unknown,
  value: unknown,
) => void;

export interface FigureTooltip {
  handler: FigureTooltipHandler;
  /** Hides it at once (a figure that goes away calls this). */
  hide(): void;
  /** Removes the listeners and the element. */
  destroy(): void;
}

export function createFigureTooltip(doc: Document = document): FigureTooltip {
  let element: HTMLDivElement | null = null;
  /** The mark whose tooltip is shown, and the one Escape dismissed (hidden until the pointer leaves it). */
  let shown: unknown = null;
  let dismissed: unknown = null;
  let hideTimer: number | null = null;
  /** Pointer over the tooltip. A flag, not only a cancelled timer: browsers send `pointerenter`
   *  before the `mouseout` on which vega says "hide", so that "hide" comes after the enter. */
  let pointerOnTooltip = false;
  const view = doc.defaultView ?? window;

  const cancelHide = () => {
    if (hideTimer !== null) view.clearTimeout(hideTimer);
    hideTimer = null;
  };
  const hide = () => {
    cancelHide();
    shown = null;
    pointerOnTooltip = false;
    element?.classList.remove('visible');
  };
  const hideSoon = () => {
    cancelHide();
    if (pointerOnTooltip) return;
    hideTimer = view.setTimeout(hide, HIDE_DELAY_MS);
  };
  const onKeyDown = (event: KeyboardEvent) => {
    if (event.key !== 'Escape' || shown === null) return;
    dismissed = shown;
    hide();
  };
  doc.addEventListener('keydown', onKeyDown);

  const ensureElement = (): HTMLDivElement => {
    if (element?.isConnected) return element;
    element = doc.createElement('div');
    element.id = TOOLTIP_ID;
    element.className = 'vg-tooltip custom-theme';
    element.setAttribute('role', 'tooltip');
    element.addEventListener('pointerenter', () => {
      pointerOnTooltip = true;
      cancelHide();
    });
    element.addEventListener('pointerleave', () => {
      pointerOnTooltip = false;
      hideSoon();
    });
    doc.body.appendChild(element);
    return element;
  };

  const handler: FigureTooltipHandler = (_handler, event, item, value) => {
    if (value == null || value === '') {
      // The pointer left `item`: a dismissed tooltip may show again next time.
      if (item === dismissed || item == null) dismissed = null;
      if (shown !== null) hideSoon();
      return;
    }
    cancelHide();
    if (item === dismissed) return;
    // Same mark, still shown: it stays where it opened, so the pointer can move onto it.
    if (item === shown && element?.classList.contains('visible')) return;
    dismissed = null;
    const tooltip = ensureElement();
    tooltip.replaceChildren(...content(doc, value));
    tooltip.classList.add('visible');
    place(tooltip, event, view);
    shown = item;
  };

  return {
    handler,
    hide,
    destroy() {
      hide();
      doc.removeEventListener('keydown', onKeyDown);
      element?.remove();
      element = null;
    },
  };
}

/** Beside the pointer: below right, else wherever it fits in the window (as vega-tooltip tries). */
function place(tooltip: HTMLElement, event: MouseEvent, view: Window) {
  const box = tooltip.getBoundingClientRect();
  const right = event.clientX + OFFSET_PX;
  const below = event.clientY + OFFSET_PX;
  const left = event.clientX - OFFSET_PX - box.width;
  const above = event.clientY - OFFSET_PX - box.height;
  const x = right + box.width <= view.innerWidth || left < 0 ? right : left;
  const y = below + box.height <= view.innerHeight || above < 0 ? below : above;
  tooltip.style.left = `${Math.max(0, x)}px`;
  tooltip.style.top = `${Math.max(0, y)}px`;
}

/** vega-lite's tooltip value: an object of title → formatted value (with `title` as a heading), or one value. */
function content(doc: Document, value: unknown): Node[] {
  if (typeof value !== 'object' || value === null) return [doc.createTextNode(String(value))];
  if (Array.isArray(value)) return [doc.createTextNode(`[${value.map(text).join(', ')}]`)];
  const { title, ...rest } = value as Record<string, unknown>;
  const nodes: Node[] = [];
  if (title != null && title !== '') {
    const heading = doc.createElement('h2');
    heading.textContent = text(title);
    nodes.push(heading);
  }
  const entries = Object.entries(rest).filter(([, entry]) => entry !== undefined);
  if (entries.length > 0) {
    const table = doc.createElement('table');
    for (const [key, entry] of entries) {
      const row = table.insertRow();
      const keyCell = row.insertCell();
      keyCell.className = 'key';
      keyCell.textContent = key;
      const valueCell = row.insertCell();
      valueCell.className = 'value';
      valueCell.textContent = text(entry);
    }
    nodes.push(table);
  }
  return nodes;
}

function text(value: unknown): string {
  return typeof value === 'object' && value !== null ? JSON.stringify(value) : String(value);
}

let pageTooltip: FigureTooltip | null = null;

/** The page's one tooltip, shared by its figures (there is one pointer, and one element by that id). */
export function figureTooltip(): FigureTooltip {
  pageTooltip ??= createFigureTooltip();
  return pageTooltip;
}
