import { describe, expect, it } from 'vitest';
import { analyseSeries } from '../analyse-series.ts';
import type { Series } from '../types.ts';
import { DECISIVE_ORDER_EVIDENCE, MIN_FRACTION_REACTED, orderEvidence } from './order-decision-thresholds.ts';

const series = (times: number[], values: number[], id = 'S-1'): Series => ({
  id,
  timeUnit: 'h',
  valueUnit: 'mg/mL',
  observations: times.map((time, i) => ({ time, value: values[i]! })),
});

// A fixed pseudo-random scatter (mulberry32, seed 2024, Box–Muller) so the checks are reproducible.
function scatter(count: number, sd: number, seed = 2024): number[] {
  let state = seed >>> 0;
  const uniform = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return Array.from(
    { length: count },
    () => sd * Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform()),
  );
}

describe('orderEvidence: the AICc lead of equal-size laws as (N − 2)·ln(RSS ratio)', () => {
  it('scales the lead by (N − 2)/N (arithmetic: ΔAICc = N·ln(RSS ratio) for laws with the same parameter count)', () => {
    // RSS ratio 3 over 9 points: ΔAICc = 9·ln 3, evidence 7·ln 3 = 7.690.
    expect(orderEvidence(9 * Math.log(3), 9)).toBeCloseTo(7 * Math.log(3), 12);
    expect(orderEvidence(12, 9)).toBeCloseTo(9.3333, 4);
    // The same lead is weaker evidence from fewer points: 12.5 is needed with 5 points, 7.5·15/13 = 8.654 with 15.
    expect(orderEvidence(12.5, 5)).toBeCloseTo(DECISIVE_ORDER_EVIDENCE, 12);
    expect(orderEvidence(8.65, 15)).toBeLessThan(DECISIVE_ORDER_EVIDENCE);
    expect(orderEvidence(8.66, 15)).toBeGreaterThan(DECISIVE_ORDER_EVIDENCE);
  });
});

describe('selectOrder names an order only on decisive evidence', () => {
  it('N2O5 in CCl4 (Eyring & Daniels 1930 N2O5 data, from memory; 86 % reacted): first order, with small-sample evidence ≥ the threshold', () => {
    const analysis = analyseSeries(
      series(
        [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144],
        [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34],
      ),
    );
    expect(analysis.selectedOrder).toBe(1);
    expect(orderEvidence(analysis.selection.deltaAiccToRunnerUp!, 9)).toBeGreaterThanOrEqual(
      DECISIVE_ORDER_EVIDENCE,
    );
    expect(analysis.verdict).toMatch(/^First order/);
    expect(analysis.verdict).toMatch(/86 % of the initial value has reacted/);
  });

  it('NO2 at 300 °C (Brown et al., Chemistry: The Central Science, NO2 sample exercise, from memory; 62 % reacted, 5 points): second order', () => {
    const analysis = analyseSeries(series([0, 50, 100, 200, 300], [0.01, 0.00787, 0.00649, 0.00481, 0.0038]));
    expect(analysis.selectedOrder).toBe(2);
    // Five points leave the free-order law (K = 4) without an AICc: N − K − 1 = 0.
    expect(analysis.selection.aicc[3]).toBeNull();
  });

  it('abstains at low conversion, saying how little has reacted (Connors, Amidon & Stella, Chemical Stability of Pharmaceuticals, from memory: ≤ 20 % is close to a coin toss)', () => {
    const times = [0, 1, 2, 3, 4, 5, 6, 7, 8];
    const noise = scatter(9, 0.3);
    const values = times.map((t, i) => 100 * Math.exp(-0.015 * t) + noise[i]!);
    const analysis = analyseSeries(series(times, values));
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.fractionReacted!).toBeLessThan(MIN_FRACTION_REACTED);
    expect(analysis.verdict).toMatch(
      /^Reaction order not identified: only 1\d % of the initial value has reacted/,
    );
    expect(analysis.verdict).toMatch(/half-lives/);
    expect(analysis.warnings.map((w) => w.code)).toContain('low-fraction-reacted');
  });

  it('abstains when the curvature is small against the scatter, and says so in those terms', () => {
    const times = [0, 2, 4, 6, 8, 10];
    const noise = scatter(6, 3, 7);
    const values = times.map((t, i) => 100 * Math.exp(-0.1 * t) + noise[i]!);
    const analysis = analyseSeries(series(times, values));
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.verdict).toMatch(/differ by at most .* mg\/mL at the measured times, against a scatter/);
  });

  it('abstains when the data contradict every integer order (noise-free order 1.5 to 90 % conversion)', () => {
    const times = Array.from({ length: 12 }, (_, i) => i);
    const noise = scatter(12, 0.05, 11);
    // C^(−0.5) = C0^(−0.5) + 0.5·k·t with C0 = 100; k chosen for 90 % loss at t = 11.
    const k = (2 * (10 ** -0.5 - 100 ** -0.5)) / 11;
    const values = times.map((t, i) => (100 ** -0.5 + 0.5 * k * t) ** -2 + noise[i]!);
    const analysis = analyseSeries(series(times, values));
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.models[3]!.n!).toBeCloseTo(1.5, 1);
    expect(analysis.verdict).toMatch(/which contradicts/);
  });

  it('abstains with 4 points, where AICc cannot compare the orders', () => {
    const analysis = analyseSeries(series([0, 1, 2, 3], [100, 50, 25, 12.5]));
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.verdict).toMatch(/with 4 points AICc cannot compare the orders/);
  });

  it('abstains for a rising series: the order laws describe loss', () => {
    const analysis = analyseSeries(series([0, 1, 2, 3, 4, 5], [0.1, 0.31, 0.52, 0.69, 0.93, 1.1]));
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.verdict).toMatch(/do not fall over time/);
  });

  it('names zero order for a line to 90 % conversion with 0.5 % noise (synthetic, known truth; no citable zero-order data set with a published k: synthetic data with known truth)', () => {
    const times = Array.from({ length: 10 }, (_, i) => i);
    const noise = scatter(10, 0.5, 3);
    const analysis = analyseSeries(
      series(
        times,
        times.map((t, i) => 100 - 10 * t + noise[i]!),
      ),
    );
    expect(analysis.selectedOrder).toBe(0);
    expect(analysis.models[0]!.k!).toBeCloseTo(10, 0);
  });
});
