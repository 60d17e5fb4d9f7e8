import type { ElementHandle, Frame, SerializedAXNode } from 'puppeteer-core';

/**
 * The element look-ups behind `page-locator.ts`: one function per kind of query, each returning
 * the matching elements now (no waiting), in document order, inside `roots` when given.
 *
 * - Roles and accessible names come from Chromium's own accessibility tree (puppeteer's
 *   `page.accessibility.snapshot`), so a test finds what a screen reader would: hidden elements
 *   are not in it, and names are the browser's, not a reimplementation of WAI-ARIA's name
 *   computation. Rows and cells without an author-given name are named by their rendered text,
 *   as WAI-ARIA 1.2 §4.3.2 "name from content" allows for those roles.
 * - Labels are `<label>`s (the control's `labels`), `aria-labelledby` and `aria-label`.
 * - Text is the innermost elements whose whole text matches, so `<p>Status: <b>ready</b></p>`
 *   is found by "Status: ready".
 * A string matches case-insensitively anywhere in the whitespace-normalised text, or the whole
 * text with `exact`; a RegExp is tested as given.
 */

export type TextMatch = string | RegExp;
/** A RegExp as it crosses into the page (RegExps do not survive serialisation). */
interface Pattern {
  source: string;
  flags: string;
}
export type Step =
  | { kind: 'css'; selector: string; hasText?: TextMatch }
  | { kind: 'role'; role: string; name?: TextMatch; exact?: boolean; level?: number }
  | { kind: 'label' | 'text' | 'placeholder'; text: TextMatch; exact?: boolean }
  | { kind: 'hasText'; text: TextMatch }
  | { kind: 'nth'; index: number }
  | { kind: 'frame'; selector: string };
export type DomStep = Exclude<Step, { kind: 'role' | 'nth' | 'frame' }>;

// Chromium names table parts of layout tables differently; they are still rows and cells.
const ROLE_ALIASES: Record<string, string> = {
  LayoutTable: 'table',
  LayoutTableRow: 'row',
  LayoutTableCell: 'cell',
  gridcell: 'cell',
};
const NAME_FROM_CONTENT = new Set(['row', 'cell', 'columnheader', 'rowheader']);

const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
const normalise = (text: string) => text.replace(/\s+/g, ' ').trim();

function toPattern(match: TextMatch, exact = false): Pattern {
  if (match instanceof RegExp) return { source: match.source, flags: match.flags.replace('g', '') };
  const text = escapeRegExp(normalise(match));
  return exact ? { source: `^${text}$`, flags: '' } : { source: text, flags: 'i' };
}

export async function dispose(handles: readonly ElementHandle[]): Promise<void> {
  await Promise.all(handles.map((handle) => handle.dispose().catch(() => undefined)));
}

/**
 * Visible as a person would see it: rendered (not under `display: none` or a closed
 * `<details>`, which `checkVisibility` knows), not `visibility: hidden`, and with an area.
 */
export function isVisible(element: ElementHandle): Promise<boolean> {
  return element
    .evaluate((node) => {
      if (!node.checkVisibility() || getComputedStyle(node).visibility !== 'visible') return false;
      const box = node.getBoundingClientRect();
      return box.width > 0 && box.height > 0;
    })
    .catch(() => false);
}

/** Elements found by CSS, label, placeholder or text, inside `roots` (or the whole document). */
export function queryInPage(
  frame: Frame,
  roots: ElementHandle[] | null,
  step: DomStep,
): Promise<ElementHandle[]> {
  const match = step.kind === 'css' ? step.hasText : step.text;
  const pattern = match === undefined ? null : toPattern(match, 'exact' in step ? step.exact : false);
  return frame
    .evaluateHandle(
      (query, pattern, useRoots, ...rootElements) => {
        const text = (value: string | null | undefined) => (value ?? '').replace(/\s+/g, ' ').trim();
        const regex = pattern ? new RegExp(pattern.source, pattern.flags) : null;
        const test = (value: string | null | undefined) => (regex ? regex.test(text(value)) : true);
        const scopes: Element[] = useRoots ? (rootElements as Element[]) : [document.documentElement];
        const inside = (scope: Element) => [...scope.querySelectorAll('*')];
        const found = new Set<Element>();
        for (const scope of scopes) {
          if (query.kind === 'hasText') {
            if (test(scope.textContent)) found.add(scope);
          } else if (query.kind === 'css') {
            for (const element of scope.querySelectorAll(query.selector))
              if (test(element.textContent)) found.add(element);
          } else if (query.kind === 'placeholder') {
            for (const element of scope.querySelectorAll('[placeholder]'))
              if (test(element.getAttribute('placeholder'))) found.add(element);
          } else if (query.kind === 'label') {
            for (const element of inside(scope)) {
              const labels = [...((element as HTMLInputElement).labels ?? [])].map(
                (label) => label.textContent,
              );
              const labelledBy = (element.getAttribute('aria-labelledby') ?? '')
                .split(/\s+/)
                .filter(Boolean)
                .map((id) => document.getElementById(id)?.textContent ?? '')
                .join(' ');
              const names = [...labels, element.getAttribute('aria-label'), labelledBy || null];
              if (names.some((name) => name !== null && test(name))) found.add(element);
            }
          } else {
            const skipped = new Set(['HEAD', 'SCRIPT', 'STYLE', 'NOSCRIPT', 'TEMPLATE', 'TITLE']);
            for (const element of inside(scope)) {
              if (skipped.has(element.tagName) || !test(element.textContent)) continue;
              if ([...element.children].some((child) => test(child.textContent))) continue;
              found.add(element);
            }
          }
        }
        return [...found].sort((a, b) =>
          a === b ? 0 : a.compareDocumentPosition(b) & Node.DOCUMENT_POSITION_FOLLOWING ? -1 : 1,
        );
      },
      { kind: step.kind, selector: step.kind === 'css' ? step.selector : '' },
      pattern,
      roots !== null,
      ...(roots ?? []),
    )
    .then(async (array) => {
      const properties = await array.getProperties();
      await array.dispose();
      return [...properties.values()].flatMap((value) => {
        const element = value.asElement();
        return element ? [element as ElementHandle] : [];
      });
    });
}

/** Elements of a role (and name, and heading level) from Chromium's accessibility tree. */
export async function queryByRole(
  frame: Frame,
  roots: ElementHandle[] | null,
  step: Extract<Step, { kind: 'role' }>,
): Promise<ElementHandle[]> {
  const page = frame.page();
  if (frame !== page.mainFrame()) throw new Error('getByRole works in the main frame only.');
  if (roots?.length === 0) return []; // scoped to what an earlier step did not find
  const tree = await page.accessibility.snapshot({ interestingOnly: false });
  const nodes: SerializedAXNode[] = [];
  const walk = (node: SerializedAXNode) => {
    const role = ROLE_ALIASES[node.role] ?? node.role;
    if (role === step.role && (step.level === undefined || node.level === step.level)) nodes.push(node);
    for (const child of node.children ?? []) walk(child);
  };
  if (tree) walk(tree);
  const pattern = step.name === undefined ? null : toPattern(step.name, step.exact);
  const regex = pattern ? new RegExp(pattern.source, pattern.flags) : null;
  const candidates: { handle: ElementHandle; byContent: boolean }[] = [];
  for (const node of nodes) {
    const role = ROLE_ALIASES[node.role] ?? node.role;
    const byContent = !node.name && NAME_FROM_CONTENT.has(role);
    if (regex && !byContent && !regex.test(normalise(node.name ?? ''))) continue;
    const handle = await node.elementHandle();
    if (handle) candidates.push({ handle, byContent });
  }
  const keep = await frame.evaluate(
    (pattern, byContent, rootCount, ...elements) => {
      const roots = elements.slice(0, rootCount) as Element[];
      const regex = pattern ? new RegExp(pattern.source, pattern.flags) : null;
      return elements.slice(rootCount).map((element, index) => {
        const inScope = rootCount === 0 || roots.some((root) => root !== element && root.contains(element));
        // biome-ignore lint/performance/useDomNodeTextContent: a row's name is its cells' text as rendered, with the gaps between cells.
        const text = ((element as HTMLElement).innerText ?? element.textContent ?? '')
          .replace(/\s+/g, ' ')
          .trim();
        return inScope && (!regex || !byContent[index] || regex.test(text));
      });
    },
    pattern,
    candidates.map((candidate) => candidate.byContent),
    roots?.length ?? 0,
    ...(roots ?? []),
    ...candidates.map((candidate) => candidate.handle),
  );
  await dispose(candidates.filter((_, index) => !keep[index]).map((candidate) => candidate.handle));
  return candidates.filter((_, index) => keep[index]).map((candidate) => candidate.handle);
}
