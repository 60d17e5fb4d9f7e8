import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { analysisFigures } from '../../../../shared/figures/analysis-figures.ts';
import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import { FIXTURE_LIMIT, reportFixture } from './render-fixture.ts';
import { multiAttributeReportFixture } from './render-fixture-attributes.ts';
import { reportFigures } from './render-report.ts';
import { buildReportContext } from './report-context.ts';
import { TEMPLATE_VARIABLES } from './report-context-variables.ts';
import { reportFigureAttribute, reportFigurePart } from './report-figure-parts.ts';
import { reportRunFigures } from './report-figures.ts';

/** The context as JSON sees it (dates as ISO strings), for comparing with the stored copy. */
const asJson = (value: unknown) => JSON.parse(JSON.stringify(value));

describe('report context of a one-attribute run', () => {
  const { context, stored, series } = reportFixture();

  it('keeps every variable it had before attributes were listed, value for value', () => {
    // Written from the fixture's context before `attributes`, `studyShelfLife` and `massBalance`
    // were added: an organisation's existing template must print the same report.
    const before = JSON.parse(
      readFileSync(path.join(import.meta.dirname, '__snapshots__', 'one-attribute-context.json'), 'utf8'),
    );
    const { attributes, studyShelfLife, massBalance, ...rest } = context;
    before.analysis.engineVersion = context.analysis.engineVersion;
    expect(asJson(rest)).toEqual(before);
    expect(Object.keys(context)).toEqual([
      ...Object.keys(before).slice(0, -3),
      'attributes',
      'studyShelfLife',
      'massBalance',
      ...Object.keys(before).slice(-3),
    ]);
    expect(attributes).toHaveLength(1);
    expect(massBalance).toBeNull();
    expect(studyShelfLife.limitingAttributes).toEqual(['Assay']);
  });

  it('has one attribute entry with the same numbers as summary, and a study shelf life from it', () => {
    const [only] = context.attributes;
    expect(only?.name).toBe('Assay');
    expect(only?.acceptanceCriterion).toBe(context.study.acceptanceCriterion);
    expect(only?.series).toEqual(context.summary.series);
    expect(only?.proposals).toEqual(context.summary.proposals);
    expect(only?.exclusions.map(({ valueText: _text, ...rest }) => rest)).toEqual(context.exclusions);
    expect(only?.figureGroups.shelfLife).toEqual(context.figureGroups.shelfLife);
    expect(only?.figureGroups.series).toEqual(context.figureGroups.series);
    const months = context.summary.proposals[0]!.proposedShelfLifeMonths!;
    expect(context.studyShelfLife).toMatchObject({
      proposed: `${months} months`,
      proposedShelfLifeMonths: months,
      limitingText: 'Assay',
      reason: null,
      statement: `Proposed shelf life: ${months} months, set by Assay.`,
    });
    expect(only?.limiting).toBe(true);
    expect(only?.outcome.statement).toBe(context.summary.proposals[0]!.statement);
  });

  it('proposes none, with the reason, when the run has no long-term proposal (a run recorded before proposals)', () => {
    const { input } = reportFixture();
    const analysis = structuredClone(stored.analysis);
    for (const condition of analysis.shelfLife ?? []) delete (condition as { proposal?: unknown }).proposal;
    const old = buildReportContext({
      ...input,
      analysisRun: { ...input.analysisRun, result: { ...stored, analysis } },
    });
    expect(old.studyShelfLife.proposed).toBeNull();
    expect(old.studyShelfLife.limitingAttributes).toEqual([]);
    expect(old.studyShelfLife.statement).toMatch(/^No shelf life is proposed: .*long-term/);
    expect(old.attributes[0]?.limiting).toBe(false);
    expect(old.attributes[0]?.proposalTable).toBeNull();
  });

  it('draws exactly the figures it always drew (ids, titles and specs)', () => {
    const before = reportFigures(analysisFigures(stored, series, { lower: FIXTURE_LIMIT }));
    const now = reportRunFigures(stored, series, {
      name: 'Assay',
      lowerLimit: FIXTURE_LIMIT,
      upperLimit: null,
    });
    expect(now).toEqual(before);
    expect(now.map((figure) => figure.id)).toEqual([
      'q1e-25',
      'arrhenius',
      'series-0-curves',
      'series-1-curves',
      'series-2-curves',
    ]);
  });
});

describe('report context of a multi-attribute run', () => {
  const { context, stored, figures } = multiAttributeReportFixture();
  const [assay, impurity, water] = context.attributes;

  it('lists every attribute in study order with its own criterion, and names the limiting one', () => {
    expect(context.attributes.map((entry) => entry.name)).toEqual(['Assay', 'Impurity B', 'Water']);
    expect(context.attributes.map((entry) => entry.acceptanceCriterion)).toEqual([
      'not less than 95 % label claim',
      'not more than 0.5 % label claim',
      'not more than 3 % w/w',
    ]);
    expect(context.attributes.map((entry) => entry.limiting)).toEqual([false, true, false]);
    expect(context.studyShelfLife.limitingText).toBe('Impurity B');
    expect(context.studyShelfLife.proposedShelfLifeMonths).toBe(
      stored.studyShelfLife!.proposedShelfLifeMonths,
    );
    expect(context.studyShelfLife.statement).toBe(stored.studyShelfLife!.statement);
    expect(context.studyShelfLife.table.rows.map((row) => row.limiting)).toEqual(['', 'yes', '']);
  });

  it('gives each attribute its own series, numbers and Q1E outcome from its own analysis', () => {
    const other = stored.otherAttributes![0]!;
    expect(impurity?.series.map((entry) => entry.id)).toEqual(other.analysis.series.map((entry) => entry.id));
    expect(impurity?.series.every((entry) => entry.id.startsWith('Impurity B · '))).toBe(true);
    const model = other.analysis.series[0]!.analysis!.models.find((candidate) => candidate.order === 0)!;
    expect(impurity?.series[0]?.k).toEqual({ estimate: model.k, interval: model.kCi95, unit: model.kUnit });
    expect(impurity?.outcome.proposedShelfLifeMonths).toBe(
      other.analysis.shelfLife!.find((entry) => entry.role === 'long-term')!.proposal!
        .proposedShelfLifeMonths,
    );
    // An impurity has an upper limit only: its results table has the time to it, not to a lower one.
    expect(impurity?.resultsTable.columns.map((column) => column.key)).toEqual([
      'batch',
      'condition',
      'points',
      'order',
      'k',
      'upper',
    ]);
    expect(impurity?.resultsTable.rows).toHaveLength(3);
    expect(assay?.resultsTable.columns.map((column) => column.key)).toContain('lower');
    // The top-level variables stay the first attribute's.
    expect(context.summary.series.map((entry) => entry.id)).toEqual(assay?.series.map((entry) => entry.id));
  });

  it('keeps the censored results with their text, how the rule handled them and the exclusion reason', () => {
    expect(impurity?.censored).toHaveLength(3);
    expect(impurity?.censored[0]).toMatchObject({
      seriesId: 'Impurity B · VZ-2401 @ 25 °C',
      time: 0,
      text: '< 0.05',
      handling: 'excluded from the fit',
    });
    expect(impurity?.censoredRuleText).toMatch(/excluded from the fit/);
    expect(impurity?.exclusions.map((entry) => entry.reason)).toEqual(
      Array(3).fill("reported below the limit (< 0.05): excluded from the fit by the study's rule"),
    );
    const table = impurity?.dataTables[0];
    expect(table?.rows[0]).toMatchObject({
      value: '< 0.05 (censored)',
      status: "Excluded: reported below the limit (< 0.05): excluded from the fit by the study's rule",
    });
    expect(impurity?.exclusions[0]?.valueText).toBe('< 0.05');
    expect(assay?.exclusions[0]?.valueText).toBe('97.1 % label claim');
    expect(water?.censored).toEqual([]);
  });

  it("shows a censored result fitted at the study's stated value with that value", () => {
    const { input } = multiAttributeReportFixture();
    const result = structuredClone(input.analysisRun.result as StoredAnalysisResult);
    result.otherAttributes![0]!.attribute = {
      ...result.otherAttributes![0]!.attribute,
      censoredRule: 'stated-value',
      censoredValue: 0.025,
    };
    // As the run reads its series: the censored value replaced by the stated one, the text kept.
    const series = input.analysisRun.series.map((entry) => ({
      ...entry,
      observations: entry.observations.map((observation) =>
        observation.censored ? { ...observation, value: 0.025, excluded: undefined } : observation,
      ),
    }));
    const stated = buildReportContext({ ...input, analysisRun: { ...input.analysisRun, result, series } });
    const own = stated.attributes[1]!;
    expect(own.censoredRuleText).toBe(
      'results reported below a limit (such as "<LOQ") are fitted at 0.025 % label claim, the value the study states; their text is kept',
    );
    expect(own.censored.map((entry) => entry.handling)).toEqual(
      Array(3).fill('fitted at 0.025 % label claim'),
    );
    expect(own.dataTables[0]?.rows[0]).toMatchObject({
      value: '< 0.05 (censored; fitted at 0.025)',
      status: 'yes',
    });
  });

  it("groups each attribute's figures, with ids unique across attributes", () => {
    const ids = figures.map((figure) => figure.id);
    expect(new Set(ids).size).toBe(ids.length);
    expect(impurity?.figureGroups.shelfLife.map((figure) => figure.id)).toEqual(['attribute-2-q1e-25']);
    expect(impurity?.figureGroups.shelfLifeAtStorage.map((figure) => figure.id)).toEqual([
      'attribute-2-q1e-25',
    ]);
    expect(water?.figureGroups.series.map((figure) => figure.id)).toEqual([
      'attribute-3-series-0-curves',
      'attribute-3-series-1-curves',
      'attribute-3-series-2-curves',
    ]);
    expect(figures.find((figure) => figure.id === 'attribute-2-q1e-25')?.title).toBe(
      'Impurity B: Q1E shelf life at 25 °C',
    );
    // The first attribute keeps the ids of a one-attribute run; the top-level groups are its own.
    expect(context.figureGroups.shelfLife.map((figure) => figure.id)).toEqual(['q1e-25']);
    expect(context.figures.map((figure) => figure.number)).toEqual(ids.map((_, index) => index + 1));
  });

  it('prints the mass balance per batch and condition with its trend', () => {
    const balance = stored.massBalance!;
    expect(context.massBalance?.statement).toBe(balance.statement);
    expect(context.massBalance?.table.rows).toHaveLength(balance.series.length);
    expect(context.massBalance?.table.rows[0]?.pulls).toBe(String(balance.series[0]!.points.length));
    expect(context.massBalance?.pointsTable.rows).toHaveLength(
      balance.series.reduce((sum, entry) => sum + entry.points.length, 0),
    );
  });

  it('says the mass balance on the summary page in one sentence: the range of the last pulls', () => {
    const balance = stored.massBalance!;
    const lasts = balance.series.map((entry) => entry.points.at(-1)!.percentOfInitial);
    const summary = context.massBalance?.summary ?? '';
    expect(summary).toMatch(
      /^Mass balance \(.+\): .+ of the initial value at the last pull, over \d+ batches and conditions/,
    );
    expect(summary).toContain(`over ${lasts.length} batches and conditions`);
    // Shorter than the statement, which gives every series' numbers.
    expect(summary.length).toBeLessThan(balance.statement.length);
  });

  it('says each method paragraph once: later attributes keep only what differs', () => {
    expect(assay?.methodStatement.ownParagraphs).toEqual(assay?.methodStatement.paragraphs);
    for (const paragraph of impurity?.methodStatement.ownParagraphs ?? [])
      expect(assay?.methodStatement.paragraphs).not.toContain(paragraph);
    expect(impurity?.methodStatement.ownParagraphs.length).toBeLessThan(
      impurity?.methodStatement.paragraphs.length ?? 0,
    );
  });

  it('has every listed variable in a multi-attribute context too', () => {
    for (const variable of TEMPLATE_VARIABLES.filter((entry) =>
      /^(attributes|studyShelfLife|massBalance)/.test(entry.path),
    ))
      expect(context[variable.path.replace(/\[\]$/, '') as 'attributes'], variable.path).toBeTruthy();
  });

  it('reads a stored run without a study verdict as its first attribute alone (never invents one)', () => {
    const { input } = multiAttributeReportFixture();
    const result = input.analysisRun.result as StoredAnalysisResult;
    const { studyShelfLife: _verdict, ...withoutVerdict } = result;
    const context = buildReportContext({
      ...input,
      analysisRun: { ...input.analysisRun, result: withoutVerdict },
    });
    expect(context.attributes).toHaveLength(3);
    expect(context.studyShelfLife.proposed).toBeNull();
    expect(context.studyShelfLife.limitingAttributes).toEqual([]);
    expect(context.studyShelfLife.statement).toMatch(/^No shelf life is proposed for the study/);
    expect(context.studyShelfLife.rows.map((row) => row.attribute)).toEqual(['Assay', 'Impurity B', 'Water']);
    expect(context.attributes.map((entry) => entry.limiting)).toEqual([false, false, false]);
    // Each attribute still shows its own outcome.
    expect(context.attributes[1]?.outcome.proposed).toMatch(/months$/);
  });
});

describe('report figure parts', () => {
  it('reads the part and the attribute from a figure id', () => {
    expect(reportFigurePart('attribute-2-q1e-25')).toBe('shelfLife');
    expect(reportFigurePart('attribute-3-arrhenius')).toBe('temperature');
    expect(reportFigurePart('attribute-2-series-4-curves')).toBe('series');
    expect(reportFigurePart('attribute-2-series-4-residuals')).toBeNull();
    expect(reportFigureAttribute('q1e-25')).toBe(0);
    expect(reportFigureAttribute('attribute-3-series-0-curves')).toBe(2);
  });
});
