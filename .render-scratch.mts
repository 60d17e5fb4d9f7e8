import { writeFileSync } from 'node:fs';
import { BrowserPool } from './server/pdf/browser-pool.ts';
import { reportFixture } from './server/reports/render-fixture.ts';
import { renderReportPdf } from './server/reports/render-report.ts';
import { loadDefaultTemplate } from './server/reports/template-default.ts';
const fx = reportFixture();
console.log(fx.figures.map((f) => f.id), fx.context.summary.headline, fx.context.warnings);
const pool = new BrowserPool();
for (const paper of ['A4', 'Letter'] as const) {
  const t = Date.now();
  const out = await renderReportPdf(pool, { template: loadDefaultTemplate(), context: fx.context, figures: fx.figures, paper });
  console.log(paper, Date.now() - t, 'ms', out.pageCount, 'pages', out.requests, out.timings, out.html.length, out.pdf.length);
  writeFileSync(`/tmp/scratch5/out/report-${paper}.pdf`, out.pdf);
  writeFileSync(`/tmp/scratch5/out/report-${paper}.html`, out.html);
}
await pool.close();
