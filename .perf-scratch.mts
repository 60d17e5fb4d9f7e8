import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { setPdfMetadata } from './server/pdf/print-pdf.ts';
import { reportFixture } from './server/reports/render-fixture.ts';
import { renderFigureMarkup } from './server/reports/render-report.ts';
const pdf = readFileSync('/tmp/scratch5/out/report-A4.pdf');
for (let i = 0; i < 5; i++) { const t = performance.now(); await setPdfMetadata(pdf, { title: 'a', author: 'b', subject: 'c', keywords: [] }); console.log('pdf-lib', (performance.now() - t).toFixed(1)); }
const fx = reportFixture();
for (let i = 0; i < 4; i++) { const t = performance.now(); await renderFigureMarkup(fx.figures); console.log('figures', (performance.now() - t).toFixed(1)); }
import * as vega from 'vega'; import { compile } from 'vega-lite';
for (const f of fx.figures) {
  const t0 = performance.now(); const c = compile(f.spec as never).spec; const t1 = performance.now();
  const rt = vega.parse(c); const t2 = performance.now();
  const v = new vega.View(rt, { renderer: 'none' }); const t3 = performance.now();
  await v.runAsync(); const t4 = performance.now();
  const svg = await v.toSVG(); const t5 = performance.now(); v.finalize();
  console.log(f.id, 'compile', (t1-t0).toFixed(1), 'parse', (t2-t1).toFixed(1), 'view', (t3-t2).toFixed(1), 'run', (t4-t3).toFixed(1), 'svg', (t5-t4).toFixed(1), svg.length);
}
