import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';

/**
 * The running header and footer Chromium prints in the page margins of every report page: the
 * report number and version with the organisation on top, "Page X of Y" below. Chromium fills
 * the `pageNumber` and `totalPages` spans itself while printing (no page script involved).
 *
 * The templates are rendered by Chromium in a separate document that does not see the page's
 * styles, so they carry their own inline style and font (Source Sans 3, as a data: URL). All
 * values are HTML-escaped.
 *
 * Reference: Chrome DevTools Protocol `Page.printToPDF` (headerTemplate, footerTemplate).
 *
 * Throws nothing (a missing font file throws at first use, naming it).
 *
 * Example: footerTemplate({ reportNumber: 'RL-1', version: 2, organisation: 'Lab' }) contains
 * `Page <span class="pageNumber"></span> of <span class="totalPages"></span>`.
 */

export const PAGE_MARGINS = { top: '20mm', bottom: '18mm', left: '18mm', right: '18mm' } as const;

export interface RunningHeader {
  reportNumber: string;
  version: number;
  organisation: string;
}

const require = createRequire(import.meta.url);
let fontCss: string | null = null;

function headerFont(): string {
  if (fontCss === null) {
    const file = require.resolve('@fontsource/source-sans-3/files/source-sans-3-latin-400-normal.woff2');
    const data = readFileSync(file).toString('base64');
    fontCss = `@font-face{font-family:'Source Sans 3';font-weight:400;src:url(data:font/woff2;base64,${data}) format('woff2');}`;
  }
  return fontCss;
}

const escapeHtml = (text: string) =>
  text
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&#39;');

const frame = (content: string) =>
  `<style>${headerFont()}</style>` +
  `<div style="font-family:'Source Sans 3',sans-serif;font-size:7.5pt;color:#5a6169;width:100%;margin:0 ${PAGE_MARGINS.left};` +
  `display:flex;justify-content:space-between;align-items:center;">${content}</div>`;

export function headerTemplate(header: RunningHeader): string {
  return frame(
    `<span>Report ${escapeHtml(header.reportNumber)} · version ${escapeHtml(String(header.version))}</span>` +
      `<span>${escapeHtml(header.organisation)}</span>`,
  );
}

export function footerTemplate(header: RunningHeader): string {
  return frame(
    `<span>${escapeHtml(header.reportNumber)} v${escapeHtml(String(header.version))}</span>` +
      '<span>Page <span class="pageNumber"></span> of <span class="totalPages"></span></span>',
  );
}
