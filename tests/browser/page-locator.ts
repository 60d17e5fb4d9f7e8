import type { ElementHandle, Frame, Page } from 'puppeteer-core';
import { dispose, isVisible, queryByRole, queryInPage, type Step, type TextMatch } from './page-queries.ts';

/**
 * Finds elements the way a person does — by role and accessible name, by label, by visible
 * text — for the browser tests, which drive Chromium with puppeteer-core (the driver that prints
 * the PDFs), and waits for them as a page updates.
 *
 * Why this exists beside puppeteer's own `page.locator()`: that locator waits and clicks, but
 * of several matches it acts on whichever answers first, and its `::-p-aria(…)` selector
 * matches an accessible name only exactly (no part of a name, no RegExp, no heading level).
 * The flow tests are written in the queries Testing Library made common (the island tests use
 * the library itself): `getByRole(role, { name })`, `getByLabel`, `getByText`. Testing Library
 * could be injected into every document the tests open, but it computes roles and names with
 * its own reading of WAI-ARIA; `page-queries.ts` takes them from Chromium's accessibility tree,
 * what a screen reader is given, so only the matching and the waiting are written here.
 *
 * A `Locator` is a description, not an element: every read or action looks the elements up
 * again, so it survives re-renders and navigation. Reads and actions on a locator that matches
 * several elements throw (pick one with `first()` or `nth()`), so an ambiguous label or a
 * duplicated button fails the test instead of clicking whichever came first. Actions wait for
 * the element to be visible.
 *
 * Throws `Error` with the locator's description when nothing matches within the timeout.
 *
 * Example: await locate(page).getByRole('button', { name: 'Sign in' }).click();
 */

type State = 'attached' | 'detached' | 'visible' | 'hidden';

const DEFAULT_TIMEOUT = 30_000;
const POLL_INTERVAL = 100;
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

export class Locator {
  private lastError: Error | null = null;

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
      if (step.kind === 'nth') {
        const list: ElementHandle[] = roots ?? [];
        const chosen: ElementHandle | undefined = list.at(step.index);
        await dispose(list.filter((handle) => handle !== chosen));
        roots = chosen ? [chosen] : [];
        continue;
      }
      if (step.kind === 'frame') {
        const [element, ...others] = await queryInPage(frame, roots, {
          kind: 'css',
          selector: step.selector,
        });
        await dispose([...(roots ?? []), ...others]);
        const inner = element ? await element.contentFrame() : null;
        if (element) await dispose([element]);
        if (!inner) return [];
        frame = inner;
        roots = null;
        continue;
      }
      const next: ElementHandle[] =
        step.kind === 'role' ? await queryByRole(frame, roots, step) : await queryInPage(frame, roots, step);
      await dispose(roots ?? []);
      roots = next;
    }
    return roots ?? [];
  }

  /**
   * The elements matched now, or null when the page could not be asked (a navigation replaced
   * the document mid-query): the caller polls again, and names the error if time runs out.
   */
  private async poll(): Promise<ElementHandle[] | null> {
    try {
      return await this.resolve();
    } catch (error) {
      this.lastError = error as Error;
      return null;
    }
  }
  private timedOut(state: State): Error {
    const cause = this.lastError ? ` Last error: ${this.lastError.message}` : '';
    return new Error(`Timed out waiting for ${this} (${state}).${cause}`);
  }

  /** Waits until exactly one element matches (and is visible, for `visible`), and hands it to `use`. */
  private async withOne<T>(
    use: (element: ElementHandle) => Promise<T>,
    options: { state?: 'attached' | 'visible'; timeout?: number } = {},
  ): Promise<T> {
    const deadline = Date.now() + (options.timeout ?? DEFAULT_TIMEOUT);
    for (;;) {
      const found = (await this.poll()) ?? [];
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
      if (Date.now() > deadline) throw this.timedOut(options.state ?? 'attached');
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
      const found = await this.poll();
      if (found) {
        const visible = await Promise.all(found.map(isVisible));
        await dispose(found);
        if (found.length === 0 || (state === 'hidden' && !visible.some(Boolean))) return;
      }
      if (Date.now() > deadline) throw this.timedOut(state);
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
