import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_MAPPING, demoWorkbook } from '../../server/demo/demo-study.ts';
import { readWorkbook } from '../../server/features/intake/index.ts';
import { BrowserPool } from '../../server/features/reports/pdf/browser-pool.ts';
import { reportFixture } from '../../server/features/reports/render/render-fixture.ts';
import { multiAttributeReportFixture } from '../../server/features/reports/render/render-fixture-attributes.ts';
import { renderReportPdf, reportFigures } from '../../server/features/reports/render/render-report.ts';
import {
  buildReportContext,
  REPORT_CAUTION,
  SIGNATURES_PLACEHOLDER,
} from '../../server/features/reports/render/report-context.ts';
import { loadDefaultTemplate } from '../../server/features/reports/render/template-default.ts';
import { analysisFigures } from '../../shared/figures/analysis-figures.ts';
import { formatSignificant } from '../../shared/figures/significant-figures.ts';
import { confidenceBands } from '../../shared/figures/stored-result.ts';
import { columnMappingSchema } from '../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../shared/intake/series-from-grid.ts';
import { analyseDataset, type DatasetOptions } from '../../shared/kinetics/analyse-dataset.ts';
import { SCREENSHOT_DIR } from '../support/browser.ts';

/**
 * The default report printed by Chromium, read back with poppler-utils (pdfinfo, pdffonts,
 * pdftotext — Debian's, independent of the code that wrote the PDF). Page images go to
 * reports/screenshots/report-*.png for a person to look at.
 */

const fixture = reportFixture();

/**
 * The demo study's report (the invented Quillatrine data of the demo seed: three batches at 25, 40,
 * 50 and 60 °C, first order fixed), built as the render pipeline builds it: a longer report whose
 * tables fall across pages, for the page-foot check.
 */
async function demoReport(): Promise<{
  context: ReturnType<typeof buildReportContext>;
  figures: typeof fixture.figures;
}> {
  const intake = seriesFromGrid(
    await readWorkbook(await demoWorkbook()),
    columnMappingSchema.parse(DEMO_MAPPING),
  );
  if (!intake.ok) throw new Error('the demo workbook did not read');
  const options: DatasetOptions = {
    confidenceLevel: 0.95,
    order: 1,
    lowerLimit: 95,
    upperLimit: 105,
    storageTemperatureC: 25,
    direction: 'decreasing',
    q1e: {
      storage: 'room-temperature',
      longTermTemperatureC: 25,
      acceleratedTemperatureC: 40,
      acceleratedChange: 'significant',
      littleChange: 'no',
      supportingData: 'yes',
    },
  };
  const analysis = analyseDataset(intake.series, options);
  const stored = { analysis, confidenceBands: confidenceBands(analysis, intake.series, options) };
  const figures = reportFigures(analysisFigures(stored, intake.series, { lower: 95, upper: 105 }));
  const context = buildReportContext({
    ...fixture.input,
    study: {
      ...fixture.input.study,
      product: 'Quillatrine 40 mg film-coated tablets',
      lowerLimit: 95,
      upperLimit: 105,
    },
    analysisRun: { ...fixture.input.analysisRun, result: stored, series: intake.series },
    figures,
  });
  return { context, figures };
}
const pool = new BrowserPool({ size: 1 });
const folder = mkdtempSync(path.join(os.tmpdir(), 'rateledger-pdf-test-'));
const printed: Record<
  'A4' | 'Letter' | 'demo' | 'multi',
  { file: string; pageCount: number; blocked: number; html: string }
> = {} as never;

const poppler = (tool: string, ...args: string[]) => execFileSync(tool, args, { encoding: 'utf8' });
const flat = (text: string) => text.replace(/\s+/g, ' ');
const info = (file: string) =>
  Object.fromEntries(
    poppler('pdfinfo', file)
      .split('\n')
      .map((line) => /^([^:]+):\s*(.*)$/.exec(line))
      .filter((match) => match !== null)
      .map((match) => [match[1], match[2]]),
  ) as Record<string, string>;

beforeAll(async () => {
  for (const paper of ['A4', 'Letter'] as const) {
    const result = await renderReportPdf(pool, {
      template: loadDefaultTemplate(),
      context: fixture.context,
      figures: fixture.figures,
      paper,
    });
    const file = path.join(folder, `report-${paper}.pdf`);
    writeFileSync(file, result.pdf);
    printed[paper] = {
      file,
      pageCount: result.pageCount,
      blocked: result.requests.blocked,
      html: result.html,
    };
  }
  const demo = await demoReport();
  const demoResult = await renderReportPdf(pool, { template: loadDefaultTemplate(), ...demo, paper: 'A4' });
  const demoFile = path.join(folder, 'report-demo.pdf');
  writeFileSync(demoFile, demoResult.pdf);
  printed.demo = { file: demoFile, pageCount: demoResult.pageCount, blocked: 0, html: demoResult.html };
  // A study of three attributes (assay, a degradation product with censored results, water).
  const multi = multiAttributeReportFixture();
  const multiResult = await renderReportPdf(pool, {
    template: loadDefaultTemplate(),
    context: multi.context,
    figures: multi.figures,
    paper: 'A4',
  });
  const multiFile = path.join(folder, 'report-multi.pdf');
  writeFileSync(multiFile, multiResult.pdf);
  printed.multi = { file: multiFile, pageCount: multiResult.pageCount, blocked: 0, html: multiResult.html };
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  for (const old of readdirSync(SCREENSHOT_DIR).filter((name) => name.startsWith('report-a4-')))
    rmSync(path.join(SCREENSHOT_DIR, old));
  poppler('pdftoppm', '-r', '50', '-png', printed.A4.file, path.join(SCREENSHOT_DIR, 'report-a4'));
});
afterAll(async () => {
  await pool.close();
  rmSync(folder, { recursive: true, force: true });
});

describe('the default report as a PDF', () => {
  it('has the page count, metadata and tagging it should (pdfinfo)', () => {
    const meta = info(printed.A4.file);
    expect(Number(meta.Pages)).toBe(printed.A4.pageCount);
    expect(Number(meta.Pages)).toBeGreaterThanOrEqual(6);
    expect(meta.Title).toBe('Stability kinetics report: Veltrazine 50 mg tablets (RL-2026-0007 v1)');
    expect(meta.Author).toBe('Analyst One');
    expect(meta.Subject).toBe('Veltrazine 50 mg tablets: Assay, study VZ-STAB-07 long-term and accelerated');
    expect(meta.Keywords).toContain('RL-2026-0007');
    expect(meta.Creator).toBe('Rateledger');
    expect(meta.Producer).toMatch(/^Rateledger/);
    expect(meta.Tagged).toBe('yes');
    expect(meta.JavaScript).toBe('no');
    expect(meta.CreationDate).toMatch(/Dec {1,2}1 14:05:00 2026/);
  });

  it("keeps Chromium's printed bytes and adds the metadata as one incremental update (ISO 32000-1 §7.5.6)", () => {
    const bytes = readFileSync(printed.A4.file).toString('latin1');
    // Two revisions: Chromium's file, then the update with our information dictionary. The page
    // count read on the fast path agrees with poppler's (checked above).
    expect(bytes.match(/%%EOF/g)?.length).toBe(2);
    const update = bytes.slice(bytes.indexOf('%%EOF') + 5);
    expect(update).toMatch(/\/Prev \d+/);
    expect(update).toContain('/Producer');
  });

  it('prints on A4 and on US Letter (pdfinfo "Page size")', () => {
    // ISO 216: A4 is 210 × 297 mm = 595.28 × 841.89 pt; ANSI/ASME Y14.1: Letter is 8.5 × 11 in = 612 × 792 pt.
    // Chromium rounds the sheet to whole CSS pixels, so allow 1 pt.
    const size = (file: string) =>
      (/([\d.]+) x ([\d.]+) pts/.exec(info(file)['Page size'] ?? '') ?? []).slice(1).map(Number);
    const [a4Width, a4Height] = size(printed.A4.file);
    expect(Math.abs(a4Width! - 595.28)).toBeLessThan(1);
    expect(Math.abs(a4Height! - 841.89)).toBeLessThan(1);
    const [letterWidth, letterHeight] = size(printed.Letter.file);
    expect(Math.abs(letterWidth! - 612)).toBeLessThan(1);
    expect(Math.abs(letterHeight! - 792)).toBeLessThan(1);
    expect(Number(info(printed.Letter.file).Pages)).toBe(printed.Letter.pageCount);
  });

  it('embeds every font, including the bundled Merriweather and Source Sans 3 (pdffonts)', () => {
    const rows = poppler('pdffonts', printed.A4.file)
      .split('\n')
      .slice(2)
      .filter((line) => line.trim() !== '');
    expect(rows.length).toBeGreaterThan(0);
    for (const row of rows) {
      // Columns: name type encoding emb sub uni object ID; the type may hold a space ("CID TrueType").
      const [embedded] = row.trim().split(/\s+/).slice(-5);
      expect(embedded, row).toBe('yes');
    }
    expect(rows.some((row) => row.includes('Merriweather'))).toBe(true);
    expect(rows.some((row) => row.includes('SourceSans3'))).toBe(true);
  });

  it("shows the analysis' key numbers with their units (pdftotext)", () => {
    const text = flat(poppler('pdftotext', printed.A4.file, '-'));
    const analysis = fixture.stored.analysis;
    const first = analysis.series[0]!.analysis!;
    const model = first.models.find((candidate) => candidate.order === first.reportedOrder)!;
    // Numbers from the engine's result, written with the product's one formatter (shared with the screen).
    expect(text).toContain(`${formatSignificant(model.k, 4)} ${model.kUnit}`);
    expect(text).toContain(`${formatSignificant(first.t90!.estimate, 3)} month`);
    const shelfLife = analysis.shelfLife!.find((condition) => condition.temperatureC === 25)!.result!
      .shelfLife!;
    // ICH Q1E §2.4.1.2.2: 24 months of long-term data, no significant change at accelerated → at most
    // min(2X, X + 12) = 36 months; the proposal is the smaller of that and the estimate, rounded down
    // to a whole month (common practice: never rounded up).
    const proposed = Math.floor(Math.min(shelfLife, 36));
    expect(text).toContain(
      `Proposed shelf life at 25 °C (long-term): ${proposed} month${proposed === 1 ? '' : 's'}.`,
    );
    expect(text).toContain(`The statistical estimate (${formatSignificant(shelfLife, 4)} month)`);
    expect(text).toContain('36 months (up to 2X, not more than X + 12 months; ICH Q1E §2.4.1.2.2)');
    expect(text).toContain(
      `${formatSignificant(analysis.arrhenius!.fit!.activationEnergy / 1000, 4)} kJ/mol`,
    );
    expect(text).toContain('not less than 95 % label claim');
    expect(text).toContain('Sample vial cracked in transit; retest recorded in deviation DV-0118.');
    expect(text).toContain(flat(REPORT_CAUTION));
    expect(text).toContain(SIGNATURES_PLACEHOLDER);
    expect(text).toContain('Time (month)'); // an axis title from inside a figure's SVG
    expect(text).not.toMatch(/NaN|undefined|\[object Object\]|Infinity/);
  });

  it('runs the header and footer on every page: report number, version and "Page X of Y"', () => {
    const pages = printed.A4.pageCount;
    for (const page of [1, pages]) {
      const text = flat(poppler('pdftotext', '-f', String(page), '-l', String(page), printed.A4.file, '-'));
      expect(text).toContain('Report RL-2026-0007 · version 1');
      expect(text).toContain(`Page ${page} of ${pages}`);
    }
  });

  it('never leaves a heading or a table caption alone at the foot of a page (pdftotext per page)', () => {
    // Common practice in report typesetting: a heading or caption belongs with what follows it.
    const decode = (text: string) =>
      text
        .replace(/<[^>]+>/g, '')
        .replace(/&amp;/g, '&')
        .replace(/&lt;/g, '<')
        .replace(/&gt;/g, '>')
        .replace(/&quot;/g, '"')
        .replace(/&#x27;/g, "'")
        .replace(/\s+/g, ' ')
        .trim();
    for (const paper of ['A4', 'Letter', 'demo', 'multi'] as const) {
      const { html, file, pageCount } = printed[paper];
      const leads = [...html.matchAll(/<(h[1-4]|caption)\b[^>]*>([\s\S]*?)<\/\1>/g)]
        .map((match) => decode(match[2] ?? ''))
        .filter((text) => text.length > 0);
      expect(leads.length).toBeGreaterThan(5);
      const alone: string[] = [];
      for (let page = 1; page <= pageCount; page += 1) {
        const lines = poppler('pdftotext', '-f', String(page), '-l', String(page), file, '-')
          .split('\n')
          .map((line) => line.replace(/\s+/g, ' ').trim())
          .filter(
            (line) =>
              line !== '' &&
              !/^Page \d+ of \d+$/.test(line) &&
              !line.startsWith('Report RL-') &&
              !/^RL-\d{4}-\d+ v\d+$/.test(line),
          );
        const last = lines.at(-1) ?? '';
        if (
          page < pageCount &&
          leads.some((lead) => lead === last || lead.endsWith(last) || last.startsWith(lead))
        )
          alone.push(`${paper} page ${page}: "${last}"`);
      }
      expect(alone).toEqual([]);
    }
  });

  it('keeps a table caption and header with its first row wherever the page ends (the check can fail)', async () => {
    // Spacer lines push the results tables down the first page one line at a time, so that for
    // some count the page ends just after a caption or a header row; they must then move to the
    // next page with the table's first row (common practice in report typesetting).
    const template = loadDefaultTemplate();
    // From a count where both tables fit on the first page to one where both have moved on.
    const [SPACER_FROM, SPACER_TO] = [18, 34];
    const tables = fixture.context.tables.shelfLife;
    const firstCell = (table: (typeof tables)[number]) =>
      String(table.rows[0]?.[table.columns[0]?.key ?? ''] ?? '');
    const stranded: string[] = [];
    let split = 0;
    for (let lines = SPACER_FROM; lines <= SPACER_TO; lines += 1) {
      const result = await renderReportPdf(pool, {
        template: {
          ...template,
          body: `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><title>Page-foot check</title>{{reportStyles}}</head><body>${'<p>Spacer line.</p>'.repeat(lines)}{{#each tables.shelfLife}}{{table this}}{{/each}}</body></html>`,
        },
        context: fixture.context,
        figures: fixture.figures,
        paper: 'A4',
      });
      const file = path.join(folder, `spacer-${lines}.pdf`);
      writeFileSync(file, result.pdf);
      for (let page = 1; page <= result.pageCount; page += 1) {
        const text = poppler('pdftotext', '-f', String(page), '-l', String(page), file, '-')
          .split('\n')
          .map((line) => line.replace(/\s+/g, ' ').trim())
          .filter((line) => line !== '' && !/^Page \d+ of \d+$/.test(line) && !/^(Report )?RL-/.test(line))
          .join(' ');
        for (const table of tables) {
          const at = text.indexOf(table.caption);
          if (at < 0) continue;
          if (page < result.pageCount) split += 1;
          if (!text.slice(at + table.caption.length).includes(firstCell(table)))
            stranded.push(`${lines} lines, page ${page}: "${table.caption}"`);
        }
      }
    }
    expect(split).toBeGreaterThan(0);
    expect(stranded).toEqual([]);
  });

  it('needed no request beyond its inlined resources', () => {
    expect(printed.A4.blocked).toBe(0);
    expect(printed.Letter.blocked).toBe(0);
  });

  it('starts a new browser when the warm one dies, and prints again', async () => {
    const pid = await pool.withBrowser(async (browser) => browser.process()?.pid);
    expect(pid).toBeTypeOf('number');
    process.kill(pid!, 'SIGKILL');
    await expect.poll(() => pool.restarts, { timeout: 10_000 }).toBe(1);
    const again = await renderReportPdf(pool, {
      template: loadDefaultTemplate(),
      context: fixture.context,
      figures: fixture.figures,
      paper: 'A4',
    });
    expect(again.pageCount).toBe(printed.A4.pageCount);
    const newPid = await pool.withBrowser(async (browser) => browser.process()?.pid);
    expect(newPid).not.toBe(pid);
  });
});
