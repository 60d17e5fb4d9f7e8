import { test } from 'vitest';
import { analyseSeries } from '../analyse-series.ts';
function mulberry32(seed: number) { let a = seed >>> 0; return () => { a = (a + 0x6d2b79f5) >>> 0; let t = a; t = Math.imul(t ^ (t >>> 15), t | 1); t ^= t + Math.imul(t ^ (t >>> 7), t | 61); return ((t ^ (t >>> 14)) >>> 0) / 4294967296; }; }
test('speed', () => {
  const rand = mulberry32(7);
  const gauss = () => { let u = 0; while (u === 0) u = rand(); const v = rand(); return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v); };
  const make = (N: number, f: number) => { const k = -Math.log(1-f)/12; return { id: 'x', timeUnit: 'month', valueUnit: '%', observations: Array.from({length: N}, (_, i) => { const t = 12*i/(N-1); return { time: t, value: 100*Math.exp(-k*t) + gauss() }; }) }; };
  for (let i = 0; i < 12; i++) { const a = analyseSeries(make(12, [0.05, 0.2, 0.5, 0.8][i % 4]!)); const m = a.models[3]!; console.log(m.iterations, m.n, m.nCi95, m.k, m.reason, a.models[1]!.rss, m.rss); }
}, 120000);
