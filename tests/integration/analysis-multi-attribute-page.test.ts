import { parse } from 'csv-parse/sync';
import ExcelJS from 'exceljs';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fixtureRun } from '../../server/features/analysis/analysis-run-fixture.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { seedMultiAttributeRun } from './multi-attribute-run-seed.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * Issue 15 §1, what the user sees of a run of several attributes: the analysis page names the
 * study's proposed shelf life and its limiting attribute, shows each attribute under its own
 * heading, the mass balance, and results reported below a limit by their text; the figures API
 * serves the other attributes' figures; the exports carry the extra sheets and columns. The run
 * row is inserted as a multi-attribute run stores it (write-once: insert only), from the invented
 * "Fictolin 10 mg" fixture (server/features/analysis/analysis-run-fixture.ts).
 */

let world: TestWorld;
let analyst: Awaited<ReturnType<typeof signIn>>['agent'];
let reviewer: Awaited<ReturnType<typeof signIn>>['agent'];
let runId: number;
let page: string;
const expected = fixtureRun(true);

function binary(response: Response, callback: (error: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  response.on('data', (chunk: Buffer) => chunks.push(chunk));
  response.on('end', () => callback(null, Buffer.concat(chunks)));
}

/** The page's text with tags removed and entities decoded, spaces collapsed. */
function text(html: string): string {
  return html
    .replace(/<[^>]+>/g, ' ')
    .replaceAll('&lt;', '<')
    .replaceAll('&gt;', '>')
    .replaceAll('&amp;', '&')
    .replaceAll('&#x27;', "'")
    .replace(/\s+/g, ' ');
}

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  ({ runId } = await seedMultiAttributeRun(world.database.db, world.organisationId, world.users.analyst!.id));
  analyst = (await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password)).agent;
  reviewer = (await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password)).agent;
  const response = await analyst.get(`/analyses/${runId}`);
  expect(response.status).toBe(200);
  page = response.text;
});

afterAll(async () => {
  await world?.close();
});

describe('the analysis page of a run of several attributes', () => {
  it('names the study’s proposed shelf life and the limiting attribute in the verdict', () => {
    const study = expected.result.studyShelfLife!;
    const verdict = /<p[^>]*id="study-verdict"[^>]*>([^<]*)<\/p>/.exec(page)?.[1];
    expect(verdict).toBe(
      `Proposed shelf life of the study: ${study.proposedShelfLife} months, limited by ${study.limitingAttributes.join(' and ')}.`,
    );
    const table = /<table[^>]*id="attribute-shelf-life-table"[\s\S]*?<\/table>/.exec(page)![0];
    // The limiting row says so in words, not by its shading alone.
    const limitingRows = [...table.matchAll(/<tr[^>]*data-limiting="true"[^>]*>([\s\S]*?)<\/tr>/g)].map(
      (match) => text(match[1]!),
    );
    expect(limitingRows).toHaveLength(study.limitingAttributes.length);
    expect(limitingRows[0]).toContain(`${study.limitingAttributes[0]} (%) limiting`);
    expect(text(table)).toContain('not more than 0.5 %');
    expect(text(table)).toContain('not less than 95 %');
    expect(page).toMatch(/role="region" aria-labelledby="attribute-shelf-heading" tabindex="0"/);
  });

  it('shows each attribute under a heading with its name, the first one’s sections as before', () => {
    const headings = [...page.matchAll(/<h([23])[^>]*>([^<]*)<\/h\1>/g)].map(
      (match) => `h${match[1]} ${match[2]}`,
    );
    expect(headings).toEqual(
      expect.arrayContaining([
        'h2 Verdict',
        'h3 Shelf life by attribute',
        'h2 Results: Assay',
        'h2 Shelf life (ICH Q1E): Assay',
        'h2 Series: Assay',
        'h2 Impurity B (%)',
        'h3 Results: Impurity B',
        'h3 Shelf life (ICH Q1E): Impurity B',
        'h3 Series: Impurity B',
        'h2 Mass balance',
      ]),
    );
    expect(headings.indexOf('h2 Impurity B (%)')).toBeGreaterThan(headings.indexOf('h2 Series: Assay'));
    expect(page).toContain('id="results-table"');
    expect(text(page)).toContain('Other attributes Impurity B (%)');
    expect(page).toContain('<a class="underline" href="#attribute-1-results">Impurity B (%)</a>');
    expect(page).toContain('href="#attribute-1-series-0"');
    expect(page).toContain('data-figure-id="attribute-1-series-0-curves"');
    expect(page).toContain(`data-figures-url="/api/analyses/${runId}/figures?group=attribute-1-series-0"`);
  });

  it('shows the results reported below a limit by their text', () => {
    const impurity = page.slice(page.indexOf('id="attribute-1-results"'));
    expect(impurity).toContain('value &lt;LOQ');
    expect(text(impurity)).toMatch(/Data of this figure[\s\S]*<LOQ/);
    expect(text(impurity)).toContain('reported below the limit (<LOQ): excluded from the fit');
  });

  it('shows the mass balance of each batch with its trend and statement', () => {
    const balance = text(page.slice(page.indexOf('id="mass-balance"'), page.indexOf('id="exclusions"')));
    expect(balance).toContain(expected.result.massBalance!.statement);
    expect(balance).toContain('Batch FX-01 at 25 °C: total against the initial value');
    expect(balance).toContain('6 99.20 0.1700 99.37 99.07');
    expect(balance).toContain(
      'Trend of the total: −0.159 % of initial per month (95 % CI −0.210 to −0.108).',
    );
  });

  it('leaves the page of a run of one attribute as it was', async () => {
    const single = await makeAnalysisRun(world.database.db, world.organisationId, world.users.analyst!);
    const html = (await analyst.get(`/analyses/${single.runId}`)).text;
    expect(html).toContain('<h2 id="results-heading" class="font-serif text-2xl">Results</h2>');
    expect(html).toContain('<h2 id="series-heading" class="font-serif text-2xl">Series</h2>');
    expect(html).not.toContain('Shelf life by attribute');
    expect(html).not.toContain('id="mass-balance"');
    expect(html).not.toContain('attribute-1-');
    expect(html).not.toContain('Other attributes');
  });

  it('is readable by a reviewer too', async () => {
    const response = await reviewer.get(`/analyses/${runId}`);
    expect(response.status).toBe(200);
    expect(response.text).toContain('Shelf life by attribute');
  });
});

describe('the figures and exports of a run of several attributes', () => {
  it('serves the other attribute’s figures by their group, and refuses a malformed group', async () => {
    const series = await analyst.get(`/api/analyses/${runId}/figures?group=attribute-1-series-0`);
    expect(series.status).toBe(200);
    expect(series.body.figures.map((figure: { id: string }) => figure.id)).toEqual([
      'attribute-1-series-0-linearised',
      'attribute-1-series-0-curves',
      'attribute-1-series-0-residuals',
    ]);
    const dataset = await analyst.get(`/api/analyses/${runId}/figures?group=attribute-1-dataset`);
    expect(dataset.body.figures.map((figure: { title: string }) => figure.title)).toContain(
      'Impurity B: Q1E shelf life at 25 °C',
    );
    const first = await analyst.get(`/api/analyses/${runId}/figures?group=series-0`);
    expect(first.body.figures.map((figure: { id: string }) => figure.id)).toEqual([
      'series-0-linearised',
      'series-0-curves',
      'series-0-residuals',
    ]);
    const refused = await analyst.get(`/api/analyses/${runId}/figures?group=attribute-x-series-0`);
    expect(refused.status).toBe(400);
  });

  it('exports every attribute’s results, the shelf life by attribute and the mass balance', async () => {
    const csv = await analyst.get(`/api/analyses/${runId}/export.csv`);
    expect(csv.status).toBe(200);
    const rows = parse(csv.text.replace(/^\uFEFF/, ''), { columns: true }) as Record<string, string>[];
    expect(new Set(rows.map((row) => row.attribute))).toEqual(new Set(['Assay', 'Impurity B']));
    const xlsx = await analyst.get(`/api/analyses/${runId}/export.xlsx`).buffer(true).parse(binary);
    expect(xlsx.status).toBe(200);
    const workbook = new ExcelJS.Workbook();
    await workbook.xlsx.load(xlsx.body as ArrayBuffer);
    const shelf = workbook.getWorksheet('Shelf life by attribute')!;
    expect(shelf.getRow(shelf.rowCount).getCell(1).value).toBe('Study (earliest of the attributes)');
    expect(workbook.getWorksheet('Mass balance')!.getRow(2).getCell(1).value).toBe('FX-01');
    expect(workbook.getWorksheet('Other attributes')!.getRow(2).getCell(1).value).toBe('Impurity B');
  });
});
