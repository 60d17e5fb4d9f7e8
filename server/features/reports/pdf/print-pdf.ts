import { ParseSpeeds, PDFDocument } from 'pdf-lib';
import type { Page } from 'puppeteer-core';
import type { BrowserPool } from './browser-pool.ts';
import { appendDocumentInfo } from './pdf-info-update.ts';
import { footerTemplate, headerTemplate, PAGE_MARGINS } from './running-header.ts';

/**
 * Prints report HTML to PDF in a warm Chromium (`BrowserPool`), sealed off from everything but
 * the HTML itself:
 * - JavaScript is disabled in the page before the content is set, so no `<script>`, event
 *   handler or `javascript:` URL runs;
 * - every request is intercepted: `data:` URLs (the inlined fonts and images) continue, all
 *   others are aborted before they leave the browser (a navigation of the page itself, e.g. a
 *   meta refresh, is answered locally with 204 No Content so the report stays), and both are
 *   counted and returned so callers and tests can prove nothing reached the network;
 * - the page is new for each render and closed afterwards, so no state passes between reports.
 *
 * The PDF is A4 or US Letter with the running header (report number and version) and footer
 * ("Page X of Y"), tagged (structure tree for accessibility) with a document outline from the
 * headings. Chromium writes Title from `<title>`; `setPdfMetadata` then sets Title, Author,
 * Subject, Keywords, Creator "Rateledger", Producer and the dates in a new document information
 * dictionary, appended as an incremental update so Chromium's bytes stay as printed.
 *
 * Reference: Chrome DevTools Protocol `Page.printToPDF` and `Fetch` domains
 * (chromedevtools.github.io/devtools-protocol); ISO 32000-1 §14.3.3 (document information).
 *
 * Throws when the browser cannot print within `timeoutMs` or dies while printing (the caller's
 * job queue retries), and from the pool when Chromium cannot start.
 *
 * Example: await printPdf(pool, { html, paper: 'A4', header: { reportNumber: 'RL-1', version: 1,
 * organisation: 'Lab' }, metadata: { title: 'T', author: 'A', subject: 'S', keywords: [] } })
 * resolves to { pdf, pageCount: 6, requests: { allowed: 0, blocked: 0, blockedUrls: [] } }.
 */

export type PdfPaper = 'A4' | 'Letter';

export interface PrintPdfOptions {
  /** The HTML, or a promise of it: the page is prepared while the HTML is still being rendered. */
  html: string | Promise<string>;
  paper: PdfPaper;
  header: { reportNumber: string; version: number; organisation: string };
  metadata: { title: string; author: string; subject: string; keywords: string[]; createdAt?: Date };
  timeoutMs?: number;
}

export interface RequestTally {
  /** Requests for inline `data:` resources, let through. */
  allowed: number;
  /** Requests for anything else, aborted before they were sent. */
  blocked: number;
  blockedUrls: string[];
}

export interface PrintPdfResult {
  pdf: Uint8Array;
  pageCount: number;
  requests: RequestTally;
}

export const PRODUCER = 'Rateledger report printer (Chromium)';
const DEFAULT_TIMEOUT_MS = 60_000;
const MAX_URLS_KEPT = 50;

/** Opens a sealed page: JavaScript off, every non-`data:` request aborted and counted. */
export async function sealedPage(page: Page, tally: RequestTally): Promise<void> {
  await page.setJavaScriptEnabled(false);
  await page.setRequestInterception(true);
  page.on('request', (request) => {
    if (request.isInterceptResolutionHandled()) return;
    const url = request.url();
    if (url.startsWith('data:')) {
      tally.allowed += 1;
      request.continue().catch(() => undefined);
    } else {
      tally.blocked += 1;
      if (tally.blockedUrls.length < MAX_URLS_KEPT) tally.blockedUrls.push(url.slice(0, 200));
      if (request.isNavigationRequest() && request.frame() === page.mainFrame()) {
        // A meta refresh or link would replace the report with an error page if aborted; an answer
        // of 204 No Content, given here without any network, makes the browser stay on the report
        // (HTML Living Standard, "navigate": a 204 response aborts the navigation).
        request.respond({ status: 204, body: '' }).catch(() => undefined);
      } else {
        request.abort('blockedbyclient').catch(() => undefined);
      }
    }
  });
}

/**
 * Sets the document information dictionary; returns the new bytes and the page count. Chromium's
 * output gets an incremental update (`appendDocumentInfo`: its bytes unchanged, one dictionary
 * appended); any other PDF is loaded and saved whole by pdf-lib.
 */
export async function setPdfMetadata(
  bytes: Uint8Array,
  metadata: PrintPdfOptions['metadata'],
  producer = PRODUCER,
): Promise<{ pdf: Uint8Array; pageCount: number }> {
  const when = metadata.createdAt ?? new Date();
  const appended = appendDocumentInfo(
    bytes,
    {
      Title: metadata.title,
      Author: metadata.author,
      Subject: metadata.subject,
      Keywords: metadata.keywords.join(' '),
      Creator: 'Rateledger',
      Producer: producer,
    },
    { CreationDate: when, ModDate: when },
  );
  if (appended) return appended;
  // Fastest: parse and write in one go instead of yielding to the event loop every 100 objects.
  const document = await PDFDocument.load(bytes, { updateMetadata: false, parseSpeed: ParseSpeeds.Fastest });
  document.setTitle(metadata.title, { showInWindowTitleBar: true });
  document.setAuthor(metadata.author);
  document.setSubject(metadata.subject);
  document.setKeywords(metadata.keywords);
  document.setCreator('Rateledger');
  document.setProducer(producer);
  document.setCreationDate(when);
  document.setModificationDate(when);
  const pdf = await document.save({ useObjectStreams: false, objectsPerTick: Number.POSITIVE_INFINITY });
  return { pdf, pageCount: document.getPageCount() };
}

export async function printPdf(pool: BrowserPool, options: PrintPdfOptions): Promise<PrintPdfResult> {
  const timeout = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
  const requests: RequestTally = { allowed: 0, blocked: 0, blockedUrls: [] };
  const html = Promise.resolve(options.html);
  html.catch(() => undefined); // awaited below; this only keeps an early rejection from going unhandled
  const printed = await pool.withBrowser(async (browser) => {
    const page = await browser.newPage();
    try {
      page.setDefaultTimeout(timeout);
      await sealedPage(page, requests);
      await page.setContent(await html, { waitUntil: 'load', timeout });
      return await page.pdf({
        format: options.paper,
        printBackground: true,
        displayHeaderFooter: true,
        headerTemplate: headerTemplate(options.header),
        footerTemplate: footerTemplate(options.header),
        margin: PAGE_MARGINS,
        preferCSSPageSize: false,
        tagged: true,
        outline: true,
        // puppeteer waits for document.fonts.ready (in an isolated world, so with page script off)
        // before it prints; the embedded @font-face files are therefore loaded when printing starts.
        waitForFonts: true,
        timeout,
      });
    } finally {
      await page.close().catch(() => undefined);
    }
  });
  const { pdf, pageCount } = await setPdfMetadata(printed, options.metadata);
  return { pdf, pageCount, requests };
}
