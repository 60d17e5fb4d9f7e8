import { describe, expect, it } from 'vitest';
import { analyseSeries } from './analyse-series.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import type { Observation, Series } from './types.ts';

// N2O5 in CCl4 at 45 °C (Eyring & Daniels 1930 via physical-chemistry texts;
// docs/methods.md#worked-examples).
const n2o5Times = [0, 184, 319, 526, 867, 1198, 1877, 2315, 3144];
const n2o5Values = [2.33, 2.08, 1.91, 1.67, 1.36, 1.11, 0.72, 0.55, 0.34];
const n2o5: Series = {
  id: 'N2O5-CCl4-45C',
  timeUnit: 's',
  valueUnit: 'mol/L',
  observations: n2o5Times.map((time, i) => ({ time, value: n2o5Values[i]! })),
};

const codeOf = (action: () => unknown): string | undefined => {
  try {
    action();
  } catch (error) {
    return error instanceof KineticsError ? error.code : 'not a KineticsError';
  }
  return undefined;
};

/** Every number in the object is finite (JSON would turn NaN/Infinity into null silently). */
function allFinite(value: unknown): boolean {
  if (typeof value === 'number') return Number.isFinite(value);
  if (Array.isArray(value)) return value.every(allFinite);
  if (value !== null && typeof value === 'object') return Object.values(value).every(allFinite);
  return true;
}

describe('analyseSeries on N2O5 (Eyring & Daniels 1930 N2O5 data (from memory))', () => {
  const analysis = analyseSeries(n2o5, { lowerLimit: 1, predictAt: [1000, 4000] });

  it('first order, k = 6.213e-4 1/s with interval [6.153, 6.274]e-4, t½ = 1116 s [1105, 1127] (NLS values of §4.1)', () => {
    expect(analysis.selectedOrder).toBe(1);
    const first = analysis.models[1]!;
    expect(first.kUnit).toBe('1/s');
    expect(first.k! / 6.213e-4).toBeCloseTo(1, 3);
    expect(first.kCi95![0] / 6.153e-4).toBeCloseTo(1, 3);
    expect(first.kCi95![1] / 6.274e-4).toBeCloseTo(1, 3);
    expect(analysis.halfLife!.estimate!).toBeCloseTo(1116, -1);
    expect(analysis.halfLife!.ci95![0]).toBeCloseTo(1105, -1);
    expect(analysis.halfLife!.ci95![1]).toBeCloseTo(1127, -1);
    expect(analysis.halfLife!.unit).toBe('s');
    // t90 = ln(10/9)/k (Bhangare et al., J. Anal. Sci. Technol. 2022, Table 2).
    expect(analysis.t90!.estimate!).toBeCloseTo(Math.log(10 / 9) / first.k!, 9);
  });

  it('reports linearised plots (R² 0.93712 / 0.99980 / 0.93963), units of k, limits, predictions, and is JSON-safe', () => {
    expect(analysis.linearized.map((fit) => Number(fit.rSquared!.toFixed(5)))).toEqual([
      0.93712, 0.9998, 0.93963,
    ]);
    expect(analysis.models.map((model) => model.kUnit)).toEqual([
      '(mol/L)/s',
      '1/s',
      '1/((mol/L)·s)',
      '(mol/L)^(-0.017)/s',
    ]);
    expect(analysis.timeToLimit!.lower!.estimate!).toBeCloseTo(
      Math.log(analysis.models[1]!.c0! / 1) / analysis.models[1]!.k!,
      8,
    );
    expect(analysis.predictions).toHaveLength(2);
    expect(analysis.warnings.map((w) => w.code)).toContain('extrapolation');
    expect(allFinite(analysis)).toBe(true);
    expect(JSON.parse(JSON.stringify(analysis))).toEqual(analysis);
    expect(analysis.confidenceLevel).toBe(0.95);
    expect(analysis.errorModel).toBe('constant');
  });
});

describe('analyseSeries on a rising series (a degradation product)', () => {
  it('fits the integer orders but not the free order n, a law of loss, and names no order', () => {
    // Zero-order formation from a level near zero, exact: C = 0.05 + 0.09·t (common practice for
    // a degradant's growth). Every integer law fits with k < 0; the free order would drift
    // towards C0 → 0 and is not fitted.
    const series: Series = {
      id: 'QX-A',
      timeUnit: 'month',
      valueUnit: '%',
      observations: [0, 3, 6, 9, 12, 18, 24].map((time) => ({ time, value: 0.05 + 0.09 * time })),
    };
    const result = analyseSeries(series, { confidenceLevel: 0.95 });
    const free = result.models.find((model) => model.order === 'n');
    expect(free?.applicable).toBe(false);
    expect(free?.reason).toBe(
      'the values do not fall over time, so the free order n, a law of loss, is not fitted',
    );
    const zero = result.models.find((model) => model.order === 0);
    expect(zero?.k).toBeCloseTo(-0.09, 10);
    expect(result.reportedOrder).toBeNull();
  });
});

describe('analyseSeries input handling', () => {
  it('sorts observations given in any order and keeps replicates as separate points', () => {
    const shuffled: Series = { ...n2o5, observations: [...n2o5.observations].reverse() };
    expect(analyseSeries(shuffled).models[1]!.k).toBeCloseTo(analyseSeries(n2o5).models[1]!.k!, 12);
    const replicated: Series = { ...n2o5, observations: [...n2o5.observations, { time: 867, value: 1.37 }] };
    const analysis = analyseSeries(replicated);
    expect(analysis.n).toBe(10);
    expect(analysis.diagnostics!.points.filter((point) => point.time === 867)).toHaveLength(2);
  });

  it('leaves excluded points out and lists them with their reasons', () => {
    const observations: Observation[] = n2o5.observations.map((o, i) =>
      i === 4 ? { ...o, value: 3.0, excluded: { reason: 'vial mislabelled' }, source: { row: 6 } } : o,
    );
    const analysis = analyseSeries({ ...n2o5, observations });
    expect(analysis.n).toBe(8);
    expect(analysis.excluded).toEqual([
      { time: 867, value: 3.0, reason: 'vial mislabelled', source: { row: 6 } },
    ]);
    expect(analysis.selectedOrder).toBe(1);
  });

  it('an analyst-fixed order is reported as such, with a warning when the data decisively favour another', () => {
    const analysis = analyseSeries(n2o5, { order: 0 });
    expect(analysis.selectedOrder).toBe(0);
    expect(analysis.orderSource).toBe('analyst');
    expect(analysis.verdict).toMatch(/^Order fixed by the analyst: zero order/);
    expect(analysis.warnings.map((w) => w.code)).toContain('analyst-order-disfavoured');
    expect(analysis.halfLife!.method).toBe('fieller');
  });

  it('no named order: no top-level half-life, but each law keeps its own figures', () => {
    const times = [0, 1, 2, 3, 4, 5];
    const analysis = analyseSeries({
      ...n2o5,
      observations: times.map((time, i) => ({
        time,
        value: 100 - 0.8 * time + [0.3, -0.2, 0.1, -0.4, 0.2, 0][i]!,
      })),
    });
    expect(analysis.selectedOrder).toBeNull();
    expect(analysis.halfLife).toBeNull();
    expect(analysis.derivedReason).toMatch(/no order is named/);
    expect(analysis.models[0]!.t90!.estimate!).toBeGreaterThan(0);
  });

  it('chooses proportional error for constant-CV data spanning two decades, constant error for constant-SD data', () => {
    const times = Array.from({ length: 12 }, (_, i) => i);
    const cv = [0.03, -0.02, 0.04, -0.05, 0.01, 0.02, -0.03, 0.05, -0.04, 0.02, -0.01, 0.03];
    const proportional = analyseSeries({
      ...n2o5,
      observations: times.map((time, i) => ({ time, value: 100 * Math.exp(-0.45 * time) * (1 + cv[i]!) })),
    });
    expect(proportional.errorModel).toBe('proportional');
    expect(proportional.errorModelChoice.source).toBe('data');
    const constant = analyseSeries(n2o5, { errorModel: 'constant' });
    expect(constant.errorModelChoice.source).toBe('caller');
  });

  it('flags a planted outlier and keeps it', () => {
    const observations = n2o5.observations.map((o, i) => (i === 5 ? { ...o, value: 1.25 } : o));
    const analysis = analyseSeries({ ...n2o5, observations });
    expect(analysis.diagnostics!.possibleOutliers).toContain(5);
    expect(analysis.warnings.map((w) => w.code)).toContain('possible-outliers');
    expect(analysis.n).toBe(9);
  });
});

describe('analyseSeries degenerate input: typed errors', () => {
  it('fewer than 3 usable points: too-few-points (including after exclusions)', () => {
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: n2o5.observations.slice(0, 2) }))).toBe(
      'too-few-points',
    );
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: [] }))).toBe('too-few-points');
    const mostlyExcluded = n2o5.observations.map((o, i) =>
      i > 1 ? { ...o, excluded: { reason: 'spilled' } } : o,
    );
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: mostlyExcluded }))).toBe('too-few-points');
  });

  it('every point at one time: single-time', () => {
    const same = [1, 2, 3].map((value) => ({ time: 5, value }));
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: same }))).toBe('single-time');
  });

  it('non-finite numbers, exclusions without a reason, bad options: invalid-input', () => {
    const broken = n2o5.observations.map((o, i) => (i === 3 ? { ...o, value: Number.NaN } : o));
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: broken }))).toBe('invalid-input');
    const silent = n2o5.observations.map((o, i) => (i === 3 ? { ...o, excluded: { reason: '  ' } } : o));
    expect(codeOf(() => analyseSeries({ ...n2o5, observations: silent }))).toBe('invalid-input');
    expect(codeOf(() => analyseSeries(n2o5, { confidenceLevel: 1.2 }))).toBe('invalid-input');
    expect(codeOf(() => analyseSeries(n2o5, { predictAt: [Number.POSITIVE_INFINITY] }))).toBe(
      'invalid-input',
    );
  });

  it('a non-positive value: ln/1/C plots not applicable, constant error used; proportional on request throws', () => {
    const withZero = n2o5.observations.map((o, i) => (i === 8 ? { ...o, value: 0 } : o));
    const analysis = analyseSeries({ ...n2o5, observations: withZero });
    expect(analysis.linearized[1]!.applicable).toBe(false);
    expect(analysis.linearized[1]!.reason).toMatch(/time 3144 has value 0/);
    expect(analysis.errorModel).toBe('constant');
    expect(allFinite(analysis)).toBe(true);
    expect(
      codeOf(() => analyseSeries({ ...n2o5, observations: withZero }, { errorModel: 'proportional' })),
    ).toBe('non-positive-value');
  });

  it('a flat series: k not significant, so t90 is not estimable (null interval with reason), never a huge number', () => {
    const flat = [0, 1, 2, 3, 4, 5, 6].map((time, i) => ({
      time,
      value: 100 + [0.2, -0.1, 0.3, -0.3, 0.1, -0.2, 0.05][i]!,
    }));
    const analysis = analyseSeries({ ...n2o5, observations: flat }, { order: 0 });
    expect(analysis.t90!.ci95).toBeNull();
    expect(analysis.t90!.reason).toMatch(/not estimable/);
    expect(allFinite(analysis)).toBe(true);
  });
});
