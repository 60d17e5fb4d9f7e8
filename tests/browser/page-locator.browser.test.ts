import type { Browser, Page } from 'puppeteer-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, newPage } from '../support/browser.ts';
import { locate } from './page-locator.ts';

/**
 * The queries the browser tests are written with, on a small page: they find what a person
 * would, and they fail — on an ambiguous match, on a hidden element, on nothing — rather than
 * act on the wrong element.
 */

let browser: Browser;
let page: Page;

beforeAll(async () => {
  browser = await launchChromium();
  page = await newPage(browser);
  await page.setContent(`<!DOCTYPE html><html><body>
    <nav aria-label="Main"><a href="#audit">Audit trail</a></nav>
    <h1>Good to see you, Ann</h1>
    <label for="email">E-mail address</label><input id="email">
    <label>Password <input id="password" type="password"></label>
    <label for="again">Password again</label><input id="again" type="password">
    <button>Sign in</button><div hidden><button>Sign in</button></div>
    <details><summary>More</summary><p id="folded">Folded text</p></details>
    <table><tr><td>Signed in</td><td><a href="#d">Download</a></td></tr></table>
    <select aria-label="Unit"><option value="d">day</option><option value="m">month</option></select>
  </body></html>`);
});
afterAll(async () => {
  await browser?.close();
});

describe('page locators', () => {
  const ui = () => locate(page);

  it('find by role and accessible name, by label, by text', async () => {
    expect(
      await ui()
        .getByRole('heading', { name: /Good to see you/, level: 1 })
        .count(),
    ).toBe(1);
    expect(await ui().getByRole('navigation', { name: 'Main' }).getByRole('link').textContent()).toBe(
      'Audit trail',
    );
    // Inside something that is not there is nothing, not the whole page.
    expect(await ui().getByRole('navigation', { name: 'Footer' }).getByRole('link').count()).toBe(0);
    await ui().getByLabel('E-mail address').fill('ann@test.example');
    expect(await page.$eval('#email', (input) => (input as HTMLInputElement).value)).toBe('ann@test.example');
    expect(
      await ui()
        .getByRole('row', { name: /Signed in Download/ })
        .count(),
    ).toBe(1);
    expect(await ui().getByRole('cell', { name: 'Signed in' }).count()).toBe(1);
    await ui().getByLabel('Unit').selectOption({ label: 'month' });
    expect(await ui().getByLabel('Unit').inputValue()).toBe('m');
  });

  it('leave hidden elements out of role queries and treat folded ones as invisible', async () => {
    expect(await ui().getByRole('button', { name: 'Sign in' }).count()).toBe(1);
    expect(await ui().locator('button', { hasText: 'Sign in' }).count()).toBe(2);
    expect(await ui().getByText('Folded text').isVisible()).toBe(false);
  });

  it('refuse an ambiguous match, and match exactly when asked', async () => {
    await expect(ui().getByLabel('Password').fill('x')).rejects.toThrow(/matches 2 elements/);
    await ui().getByLabel('Password', { exact: true }).fill('secret');
    expect(await page.$eval('#password', (input) => (input as HTMLInputElement).value)).toBe('secret');
  });

  it('time out on what is not there', async () => {
    await expect(ui().getByRole('button', { name: 'Sign out' }).waitFor({ timeout: 300 })).rejects.toThrow(
      /Timed out/,
    );
    await expect(ui().getByText('Folded text').waitFor({ timeout: 300 })).rejects.toThrow(/Timed out/);
  });
});
