/**
 * Benchmark of the report pipeline (issue 5): a warm render of the default report — five
 * figures drawn to SVG by vega on the server, the Handlebars template, Chromium printing in a
 * sealed page (JavaScript off, requests intercepted) and the document metadata (appended as an
 * incremental update) — against Chromium printing the same stored HTML directly (new page, setContent, page.pdf with the same print
 * options, nothing else). Runs alternate between the two so machine load affects both alike.
 *
 * Targets: warm pipeline median under 1.5 s; pipeline / direct median ratio at most 1.3 when it
 * draws the figures, and at most 1.1 with the figures an analysis run keeps (drawn once when its
 * first report is rendered, `run-figures.ts`), which is how reports print.
 * Exits 1 when a target is missed. Usage: `npx tsx tests/bench/report-render.ts [runs]`.
 */
import { performance } from 'node:perf_hooks';
import type { TopLevelSpec } from 'vega-lite';
import { renderSvg } from '../../server/features/reports/figures/render-svg.ts';
import { BrowserPool } from '../../server/features/reports/pdf/browser-pool.ts';
import {
  footerTemplate,
  headerTemplate,
  PAGE_MARGINS,
} from '../../server/features/reports/pdf/running-header.ts';
import { reportFixture } from '../../server/features/reports/render/render-fixture.ts';
import {
  type RenderReportInput,
  renderReportPdf,
} from '../../server/features/reports/render/render-report.ts';
import { STORED_FIGURE_PREFIX } from '../../server/features/reports/render/run-figures.ts';
import { loadDefaultTemplate } from '../../server/features/reports/render/template-default.ts';

const RUNS = Number(process.argv[2] ?? 9);
const WARM_UPS = 2;
const TARGET_MS = 1500;
const TARGET_RATIO = 1.3;
/** Printing with the figures a run keeps (drawn once): at most about 1.1× Chromium alone. */
const TARGET_STORED_RATIO = 1.1;

const median = (values: number[]) => {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle]! : (sorted[middle - 1]! + sorted[middle]!) / 2;
};

const fixture = reportFixture();
const template = loadDefaultTemplate();
const input = { template, context: fixture.context, figures: fixture.figures, paper: 'A4' as const };
const pool = new BrowserPool({ size: 1 });
const header = {
  reportNumber: fixture.context.report.number,
  version: fixture.context.report.version,
  organisation: fixture.context.organisation.name,
};

async function pipeline(figures: RenderReportInput['figures'] = input.figures) {
  const started = performance.now();
  const result = await renderReportPdf(pool, { ...input, figures });
  return { ms: performance.now() - started, result };
}

/** The same figures as a stored run holds them: drawn once (`run-figures.ts`), printed as stored. */
async function storedFigures(): Promise<RenderReportInput['figures']> {
  const stored: RenderReportInput['figures'][number][] = [];
  for (const figure of fixture.figures) {
    const svg = await renderSvg(figure.spec as unknown as TopLevelSpec, {
      idPrefix: STORED_FIGURE_PREFIX,
      title: figure.title,
      description: figure.description,
    });
    stored.push({ id: figure.id, title: figure.title, description: figure.description, svg });
  }
  return stored;
}

async function direct(html: string) {
  const started = performance.now();
  await pool.withBrowser(async (browser) => {
    const page = await browser.newPage();
    try {
      await page.setContent(html, { waitUntil: 'load' });
      await page.pdf({
        format: 'A4',
        printBackground: true,
        displayHeaderFooter: true,
        headerTemplate: headerTemplate(header),
        footerTemplate: footerTemplate(header),
        margin: PAGE_MARGINS,
        tagged: true,
        outline: true,
      });
    } finally {
      await page.close();
    }
  });
  return performance.now() - started;
}

try {
  const launchStarted = performance.now();
  await pool.warm();
  console.log(`Chromium launch: ${(performance.now() - launchStarted).toFixed(0)} ms`);
  const first = await pipeline();
  const html = first.result.html;
  console.log(
    `first (cold template and vega) render: ${first.ms.toFixed(0)} ms; ${first.result.pageCount} pages, ${fixture.figures.length} figures, ` +
      `HTML ${(html.length / 1024).toFixed(0)} kB, PDF ${(first.result.pdf.length / 1024).toFixed(0)} kB`,
  );
  for (let index = 0; index < WARM_UPS; index += 1) {
    await pipeline();
    await direct(html);
  }
  const kept = await storedFigures();
  await pipeline(kept);
  const pipelineMs: number[] = [];
  const keptMs: number[] = [];
  const directMs: number[] = [];
  const parts = { figuresMs: [] as number[], templateMs: [] as number[], printMs: [] as number[] };
  for (let index = 0; index < RUNS; index += 1) {
    const run = await pipeline();
    pipelineMs.push(run.ms);
    parts.figuresMs.push(run.result.timings.figuresMs);
    parts.templateMs.push(run.result.timings.templateMs);
    parts.printMs.push(run.result.timings.printMs);
    directMs.push(await direct(html));
    keptMs.push((await pipeline(kept)).ms);
  }
  const pipelineMedian = median(pipelineMs);
  const directMedian = median(directMs);
  const ratio = pipelineMedian / directMedian;
  console.log(
    `warm pipeline, median of ${RUNS}: ${pipelineMedian.toFixed(0)} ms (min ${Math.min(...pipelineMs).toFixed(0)}, max ${Math.max(...pipelineMs).toFixed(0)})`,
  );
  console.log(
    `  of which figures ${median(parts.figuresMs).toFixed(0)} ms, template ${median(parts.templateMs).toFixed(1)} ms, ` +
      `print + metadata ${median(parts.printMs).toFixed(0)} ms`,
  );
  console.log(
    `direct Chromium print of the same HTML, median of ${RUNS}: ${directMedian.toFixed(0)} ms (min ${Math.min(...directMs).toFixed(0)})`,
  );
  const keptMedian = median(keptMs);
  const keptRatio = keptMedian / directMedian;
  console.log(
    `pipeline with the run's stored figures (as reports print them), median of ${RUNS}: ${keptMedian.toFixed(0)} ms`,
  );
  const timeOk = pipelineMedian < TARGET_MS;
  const ratioOk = ratio <= TARGET_RATIO;
  const keptOk = keptRatio <= TARGET_STORED_RATIO;
  console.log(
    `${timeOk ? 'PASS' : 'FAIL'} warm render ${pipelineMedian.toFixed(0)} ms (target < ${TARGET_MS} ms)`,
  );
  console.log(
    `${ratioOk ? 'PASS' : 'FAIL'} pipeline / direct ratio ${ratio.toFixed(2)}× (target ≤ ${TARGET_RATIO}×)`,
  );
  console.log(
    `${keptOk ? 'PASS' : 'FAIL'} stored-figures pipeline / direct ratio ${keptRatio.toFixed(2)}× (target ≤ ${TARGET_STORED_RATIO}×, issue 15 §2)`,
  );
  process.exitCode = timeOk && ratioOk && keptOk ? 0 : 1;
} finally {
  await pool.close();
}
