import type { ElementHandle, Frame, Page, SerializedAXNode } from 'puppeteer-core';

/**
 * Finds elements the way a person does — by role and accessible name, by label, by visible
 * text — for browser tests driven by puppeteer-core, and waits for them as a page updates.
 *
 * A `Locator` is a description, not an element: every read or action looks the elements up
 * again, so it survives re-renders and navigation. Reads and actions on a locator that matches
 * several elements throw (pick one with `first()` or `nth()`), so an ambiguous label or a
 * duplicated button fails the test instead of clicking whichever came first.
 *
 * Matching, as in the Testing Library / Playwright queries the tests were first written with:
 * a string matches case-insensitively anywhere in the whitespace-normalised text, `exact: true`
 * matches the whole text, a RegExp is tested as given.
 * - `getByRole` reads Chromium's own accessibility tree (role, accessible name, heading level;
 *   hidden elements are not in it). Rows and cells without an author-given name are named by
 *   their rendered text, as WAI-ARIA 1.2 §4.3.2 "name from content" allows for those roles.
 * - `getByLabel` matches `<label>`s, `aria-labelledby` and `aria-label`.
 * - `getByText` matches the innermost elements whose text matches.
 *
 * Throws `Error` with the locator's description when nothing matches within the timeout.
 *
 * Example: await locate(page).getByRole('button', { name: 'Sign in' }).click();
 */

type TextMatch = string | RegExp;
interface Pattern {
  source: string;
  flags: string;
}
type Step =
  | { kind: 'css'; selector: string; hasText?: TextMatch }
  | { kind: 'role'; role: string; name?: TextMatch; exact?: boolean; level?: number }
  | { kind: 'label' | 'text' | 'placeholder'; text: TextMatch; exact?: boolean }
  | { kind: 'hasText'; text: TextMatch }
  | { kind: 'nth'; index: number }
  | { kind: 'frame'; selector: string };
type State = 'attached' | 'detached' | 'visible' | 'hidden';

const DEFAULT_TIMEOUT = 30_000;
const POLL_INTERVAL = 100;
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

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

async function dispose(handles: readonly ElementHandle[]) {
  await Promise.all(handles.map((handle) => handle.dispose().catch(() => undefined)));
}

/**
 * Visible as a person would see it: rendered (not under `display: none` or a closed
 * `<details>`, which `checkVisibility` knows), not `visibility: hidden`, and with an area.
 */
function isVisible(element: ElementHandle): Promise<boolean> {
  return element
    .evaluate((node) => {
      if (!node.checkVisibility() || getComputedStyle(node).visibility !== 'visible') return false;
      const box = node.getBoundingClientRect();
      return box.width > 0 && box.height > 0;
    })
    .catch(() => false);
}

/** The elements of `step` inside `roots` (or the whole document), in document order. */
function queryInPage(
  frame: Frame,
  roots: ElementHandle[] | null,
  step: Exclude<Step, { kind: 'role' | 'nth' | 'frame' }>,
  pattern: Pattern | null,
): Promise<ElementHandle[]> {
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

/** Elements of a role (and name) from Chromium's accessibility tree, inside `roots` if given. */
async function queryByRole(
  frame: Frame,
  roots: ElementHandle[] | null,
  step: Extract<Step, { kind: 'role' }>,
): Promise<ElementHandle[]> {
  const page = frame.page();
  if (frame !== page.mainFrame()) throw new Error('getByRole works in the main frame only.');
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
        const inScope =
          roots.length === 0 || roots.some((root) => root !== element && root.contains(element));
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

export class Locator {
  constructor(
    private readonly frame: Frame,
    private readonly steps: readonly Step[] = [],
  ) {}

  private chain(step: Step): Locator {
    return new Locator(this.frame, [...this.steps, step]);
  }

  locator(selector: string, options: { hasText?: TextMatch } = {}): Locator {
    return this.chain({ kind: 'css', selector, ...options });
  }
  getByRole(role: string, options: { name?: TextMatch; exact?: boolean; level?: number } = {}): Locator {
    return this.chain({ kind: 'role', role, ...options });
  }
  getByLabel(text: TextMatch, options: { exact?: boolean } = {}): Locator {
    return this.chain({ kind: 'label', text, ...options });
  }
  getByText(text: TextMatch, options: { exact?: boolean } = {}): Locator {
    return this.chain({ kind: 'text', text, ...options });
  }
  getByPlaceholder(text: TextMatch, options: { exact?: boolean } = {}): Locator {
    return this.chain({ kind: 'placeholder', text, ...options });
  }
  filter(options: { hasText: TextMatch }): Locator {
    return this.chain({ kind: 'hasText', text: options.hasText });
  }
  /** The document inside the `<iframe>` this selector finds. */
  frameLocator(selector: string): Locator {
    return this.chain({ kind: 'frame', selector });
  }
  nth(index: number): Locator {
    return this.chain({ kind: 'nth', index });
  }
  first(): Locator {
    return this.nth(0);
  }

  toString(): string {
    return this.steps
      .map((step) => JSON.stringify(step, (_, value) => (value instanceof RegExp ? String(value) : value)))
      .join(' » ');
  }

  /** Every element the locator matches now. */
  private async resolve(): Promise<ElementHandle[]> {
    let frame = this.frame;
    let roots: ElementHandle[] | null = null;
    for (const step of this.steps) {
      let next: ElementHandle[];
      if (step.kind === 'nth') {
        const list: ElementHandle[] = roots ?? [];
        const chosen: ElementHandle | undefined = list.at(step.index);
        await dispose(list.filter((handle) => handle !== chosen));
        roots = chosen ? [chosen] : [];
        continue;
      }
      if (step.kind === 'frame') {
        const [element, ...others] = await queryInPage(
          frame,
          roots,
          { kind: 'css', selector: step.selector },
          null,
        );
        await dispose([...(roots ?? []), ...others]);
        const inner = element ? await element.contentFrame() : null;
        if (element) await dispose([element]);
        if (!inner) return [];
        frame = inner;
        roots = null;
        continue;
      }
      if (step.kind === 'role') next = await queryByRole(frame, roots, step);
      else {
        const match = step.kind === 'css' ? step.hasText : step.text;
        const exact = 'exact' in step ? step.exact : false;
        next = await queryInPage(frame, roots, step, match === undefined ? null : toPattern(match, exact));
      }
      await dispose(roots ?? []);
      roots = next;
    }
    return roots ?? [];
  }

  /** Waits until exactly one element matches (and is visible, for `visible`), and hands it to `use`. */
  private async withOne<T>(
    use: (element: ElementHandle) => Promise<T>,
    options: { state?: 'attached' | 'visible'; timeout?: number } = {},
  ): Promise<T> {
    const deadline = Date.now() + (options.timeout ?? DEFAULT_TIMEOUT);
    for (;;) {
      const found = await this.resolve().catch(() => [] as ElementHandle[]);
      if (found.length > 1) {
        await dispose(found);
        throw new Error(`${this} matches ${found.length} elements; choose one with first() or nth().`);
      }
      const [element] = found;
      if (element && (options.state !== 'visible' || (await isVisible(element)))) {
        try {
          return await use(element);
        } finally {
          await dispose([element]);
        }
      }
      await dispose(found);
      if (Date.now() > deadline)
        throw new Error(`Timed out waiting for ${this} (${options.state ?? 'attached'}).`);
      await sleep(POLL_INTERVAL);
    }
  }

  async waitFor(options: { state?: State; timeout?: number } = {}): Promise<void> {
    const state = options.state ?? 'visible';
    if (state === 'attached' || state === 'visible') {
      await this.withOne(async () => undefined, { state, timeout: options.timeout });
      return;
    }
    const deadline = Date.now() + (options.timeout ?? DEFAULT_TIMEOUT);
    for (;;) {
      const found = await this.resolve().catch(() => [] as ElementHandle[]);
      const visible = await Promise.all(found.map(isVisible));
      await dispose(found);
      if (found.length === 0 || (state === 'hidden' && !visible.some(Boolean))) return;
      if (Date.now() > deadline) throw new Error(`Timed out waiting for ${this} (${state}).`);
      await sleep(POLL_INTERVAL);
    }
  }

  async count(): Promise<number> {
    const found = await this.resolve();
    await dispose(found);
    return found.length;
  }
  async all(): Promise<Locator[]> {
    return Array.from({ length: await this.count() }, (_, index) => this.nth(index));
  }
  async allTextContents(): Promise<string[]> {
    const found = await this.resolve();
    const texts = await Promise.all(
      found.map((element) => element.evaluate((node) => node.textContent ?? '')),
    );
    await dispose(found);
    return texts;
  }
  textContent(): Promise<string | null> {
    return this.withOne((element) => element.evaluate((node) => node.textContent));
  }
  getAttribute(name: string): Promise<string | null> {
    return this.withOne((element) => element.evaluate((node, name) => node.getAttribute(name), name));
  }
  inputValue(): Promise<string> {
    return this.withOne((element) => element.evaluate((node) => (node as HTMLInputElement).value));
  }
  isChecked(): Promise<boolean> {
    return this.withOne((element) => element.evaluate((node) => (node as HTMLInputElement).checked));
  }
  async isVisible(): Promise<boolean> {
    const found = await this.resolve();
    try {
      if (found.length > 1) throw new Error(`${this} matches ${found.length} elements.`);
      return found[0] ? await isVisible(found[0]) : false;
    } finally {
      await dispose(found);
    }
  }

  click(): Promise<void> {
    return this.withOne((element) => element.click(), { state: 'visible' });
  }
  hover(_options: { force?: boolean } = {}): Promise<void> {
    return this.withOne((element) => element.hover(), { state: 'visible' });
  }
  scrollIntoViewIfNeeded(): Promise<void> {
    return this.withOne((element) => element.scrollIntoView());
  }
  async screenshot(options: { path: string }): Promise<void> {
    await this.withOne((element) => element.screenshot({ path: options.path as `${string}.png` }), {
      state: 'visible',
    });
  }
  /** Replaces the value of an input, textarea or editable element, as typing would. */
  fill(value: string): Promise<void> {
    return this.withOne(
      async (element) => {
        await element.evaluate((node) => {
          (node as HTMLElement).focus();
          if (node instanceof HTMLInputElement || node instanceof HTMLTextAreaElement) node.select();
          else document.getSelection()?.selectAllChildren(node);
        });
        const keyboard = this.frame.page().keyboard;
        if (value === '') await keyboard.press('Delete');
        else await keyboard.sendCharacter(value);
        const now = await element.evaluate((node) =>
          node instanceof HTMLInputElement || node instanceof HTMLTextAreaElement ? node.value : null,
        );
        if (now !== null && now !== value)
          throw new Error(`${this} holds ${JSON.stringify(now)} after fill.`);
      },
      { state: 'visible' },
    );
  }
  async check(): Promise<void> {
    if (!(await this.isChecked())) await this.click();
    if (!(await this.isChecked())) throw new Error(`${this} did not become checked.`);
  }
  /** Chooses an option by its value or text, `{ label }` or `{ index }`; fires input and change. */
  selectOption(option: string | { label: string } | { index: number }): Promise<void> {
    return this.withOne(
      async (element) => {
        const value = await element.evaluate((node, option) => {
          const options = [...(node as HTMLSelectElement).options];
          const chosen =
            typeof option === 'string'
              ? options.find((item) => item.value === option || item.label === option)
              : 'label' in option
                ? options.find((item) => item.label === option.label)
                : options[option.index];
          return chosen?.value ?? null;
        }, option);
        if (value === null) throw new Error(`${this} has no option ${JSON.stringify(option)}.`);
        await element.select(value);
      },
      { state: 'visible' },
    );
  }
  setInputFiles(file: string): Promise<void> {
    return this.withOne((element) => (element as ElementHandle<HTMLInputElement>).uploadFile(file));
  }
}

/** The starting point of every query: the page's (or a frame's) whole document. */
export function locate(page: Page | Frame): Locator {
  return new Locator('mainFrame' in page ? page.mainFrame() : page);
}
