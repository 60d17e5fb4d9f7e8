import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { PDFDocument, ParseSpeeds } from 'pdf-lib';
const pdf = readFileSync('/tmp/scratch5/out/report-A4.pdf');
for (let i = 0; i < 6; i++) {
  const t = performance.now();
  const d = await PDFDocument.load(pdf, { updateMetadata: false, parseSpeed: ParseSpeeds.Fastest });
  const t1 = performance.now();
  d.setTitle('x');
  const out = await d.save({ useObjectStreams: false, objectsPerTick: Number.POSITIVE_INFINITY });
  console.log('load', (t1 - t).toFixed(1), 'save', (performance.now() - t1).toFixed(1), out.length, pdf.length);
}
console.log(pdf.subarray(pdf.length - 400).toString('latin1'));
