import { describe, expect, it } from 'vitest';
import { reportFixture } from './render-fixture.ts';
import { REPORT_CAUTION, SIGNATURES_PLACEHOLDER } from './report-context.ts';
import { tidyNote } from './report-context-tables.ts';
import { TEMPLATE_VARIABLES } from './report-context-variables.ts';
import { TEMPLATE_HELPERS } from './template-helpers.ts';

const valueAt = (root: unknown, path: string): unknown =>
  path
    .replace(/\[\]$/, '')
    .split('.')
    .reduce<unknown>(
      (node, key) =>
        node !== null && typeof node === 'object' && Object.hasOwn(node, key)
          ? (node as Record<string, unknown>)[key]
          : undefined,
      root,
    );

describe('buildReportContext', () => {
  const { context, stored, input } = reportFixture();

  it('has every variable the editor lists, and lists every top-level field', () => {
    for (const variable of TEMPLATE_VARIABLES) {
      expect(valueAt(context, variable.path), variable.path).not.toBeUndefined();
      if (variable.path.endsWith('[]'))
        expect(Array.isArray(valueAt(context, variable.path)), variable.path).toBe(true);
    }
    const listedTop = new Set(TEMPLATE_VARIABLES.map((variable) => variable.path.split(/[.[]/)[0]));
    expect(Object.keys(context).filter((key) => !listedTop.has(key))).toEqual([]);
  });

  it('describes every helper', () => {
    expect(
      TEMPLATE_HELPERS.every(
        (helper) => helper.description.length > 20 && helper.usage.includes(helper.name),
      ),
    ).toBe(true);
  });

  it('holds data only: no functions anywhere, and no NaN or Infinity', () => {
    const walk = (value: unknown, where: string): void => {
      expect(typeof value, where).not.toBe('function');
      if (typeof value === 'number') expect(Number.isFinite(value), where).toBe(true);
      if (value && typeof value === 'object' && !(value instanceof Date)) {
        for (const [key, entry] of Object.entries(value)) walk(entry, `${where}.${key}`);
      }
    };
    walk(context, 'context');
  });

  it("carries the engine's numbers unchanged (the report invents nothing)", () => {
    const first = stored.analysis.series[0]!.analysis!;
    const model = first.models.find((candidate) => candidate.order === first.reportedOrder)!;
    expect(context.summary.series[0]?.k).toEqual({
      estimate: model.k,
      interval: model.kCi95,
      unit: model.kUnit,
    });
    expect(context.summary.shelfLife[0]?.shelfLife).toBe(stored.analysis.shelfLife![0]!.result!.shelfLife);
    expect(context.analysis.pointsUsed).toBe(stored.analysis.methodStatement.data.pointsUsed);
  });

  it('puts the proposal of the long-term condition first in the verdict, and marks other conditions as for information', () => {
    expect(context.summary.headline[0]).toMatch(
      /^Proposed shelf life at 25 °C \(long-term\): \d+ months?\. /,
    );
    expect(context.summary.headline[1]).toMatch(/40 °C \(not the storage condition; for information\)/);
  });

  it('shows the proposal never above the estimate nor the ICH Q1E limit, with its branch (ICH Q1E Appendix A)', () => {
    const [proposal] = context.summary.proposals;
    const estimate = stored.analysis.shelfLife![0]!.result!.shelfLife!;
    expect(proposal?.proposedShelfLifeMonths).toBe(Math.floor(Math.min(estimate, 36)));
    // X = 24 months, room temperature, statistics and supporting data: min(2X, X + 12) = 36 (ICH Q1E §2.4.1.2.2).
    expect(proposal?.extrapolationLimit?.valueMonths).toBe(36);
    expect(proposal?.extrapolationLimit?.section).toBe('ICH Q1E §2.4.1.2.2');
    const table = context.resultTables.find((entry) => entry.caption.startsWith('Proposed shelf life'));
    expect(table?.rows[0]).toMatchObject({ where: '25 °C', role: 'long-term' });
    expect(table?.rows[1]?.basis).toMatch(/proposed from long-term data only/);
  });

  it('lists the excluded point with its reason, and the caution and signature placeholder', () => {
    expect(context.exclusions).toEqual([
      expect.objectContaining({
        seriesId: 'VZ-2402 @ 25 °C',
        time: 9,
        value: 97.1,
        reason: expect.stringMatching(/DV-0118/),
      }),
    ]);
    expect(context.caution).toBe(REPORT_CAUTION);
    expect(context.caution).toMatch(/support, and do not replace/);
    expect(context.signatures).toEqual({ placeholder: SIGNATURES_PLACEHOLDER, entries: [] });
    expect(context.organisation.timeZone).toBe(input.organisation.timeZone);
  });

  it('rounds full-precision numbers quoted in engine notes to 4 significant figures', () => {
    expect(tidyNote('meets the limit at 30.529860554471 (line x)')).toBe('meets the limit at 30.53 (line x)');
    expect(tidyNote('k = 0.0015 and 12.5')).toBe('k = 0.0015 and 12.5');
  });
});
