import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { fixtureRun, fixtureStudyShelfLife, IMPURITY } from './analysis-run-fixture.ts';
import { massBalanceModel, studyVerdictModel } from './analysis-study-verdict.ts';
import { analysisPageModel, runFigures } from './analysis-view.ts';

const sha256 = (value: unknown) => createHash('sha256').update(JSON.stringify(value)).digest('hex');

describe('the analysis page of a run of one attribute', () => {
  // Digests of the page model and the figures of this fixture, taken with the code of commit
  // 9b340da, before several attributes were shown: the page of one attribute is unchanged. Engine
  // 0.4.0 changed the model only in the version string of its method statement (with
  // ENGINE_VERSION set back to 0.3.0 it gives 9b340da's 294d932a71676efb69f7e07e5064fffd89f7434108c66a5ca1ee63ab246d89dd).
  it('has the same model and figures as before', () => {
    const run = fixtureRun(false);
    const model = analysisPageModel(run, true);
    expect('multiAttribute' in model).toBe(false);
    expect(sha256(model)).toBe('8cb09d87834d8c303704d3412d88f48882555c4fc497be1beccc54db985ed7de');
    expect(sha256(runFigures(run))).toBe('fd5f15d48ed058cbb86b9cc641caab6cadfd63bc06dcb7149de9a648ac5d4d42');
  });
});

describe('the analysis page of a run of several attributes', () => {
  const run = fixtureRun(true);
  const model = analysisPageModel(run, true);
  const study = run.result.studyShelfLife!;

  it('names the study’s shelf life and its limiting attribute', () => {
    const verdict = model.multiAttribute!.verdict!;
    expect(study.proposedShelfLife).not.toBeNull();
    expect(study.limitingAttributes.length).toBeGreaterThan(0);
    expect(verdict.headline).toBe(
      `Proposed shelf life of the study: ${study.proposedShelfLife} months, limited by ${study.limitingAttributes.join(' and ')}.`,
    );
    expect(verdict.rows.map((row) => row.attribute)).toEqual(['Assay', 'Impurity B']);
    expect(verdict.rows.map((row) => row.criterion)).toEqual(['not less than 95 %', 'not more than 0.5 %']);
    expect(verdict.rows.filter((row) => row.limiting).map((row) => row.attribute)).toEqual(
      study.limitingAttributes,
    );
  });

  it('says so when an attribute proposes none, and marks a tie', () => {
    const [assay, impurity] = study.attributes;
    const none = fixtureStudyShelfLife([
      assay!,
      { ...impurity!, proposedShelfLife: null, reason: 'no long-term data' },
    ]);
    expect(studyVerdictModel({ ...run.result, studyShelfLife: none })!.headline).toBe(
      'No shelf life is proposed for the study: Impurity B proposes no shelf life: no long-term data',
    );
    const tie = fixtureStudyShelfLife([
      { ...assay!, proposedShelfLife: 24 },
      { ...impurity!, proposedShelfLife: 24 },
    ]);
    const tied = studyVerdictModel({ ...run.result, studyShelfLife: tie })!;
    expect(tied.headline).toBe(
      'Proposed shelf life of the study: 24 months, limited by Assay and Impurity B (a tie).',
    );
    expect(tied.rows.every((row) => row.limiting)).toBe(true);
    expect(studyVerdictModel({ ...run.result, studyShelfLife: undefined })).toBeNull();
  });

  it('shows the other attribute’s own results under its name, with its own ids', () => {
    const [impurity] = model.multiAttribute!.others;
    expect(model.multiAttribute!.others).toHaveLength(1);
    expect(impurity!.heading).toBe('Impurity B (%)');
    expect(impurity!.criterion).toBe('not more than 0.5 %');
    expect(impurity!.hasUpperLimit).toBe(true);
    expect(impurity!.hasLowerLimit).toBe(false);
    expect(impurity!.series.map((entry) => entry.id)).toEqual(
      run.result.otherAttributes![0]!.analysis.series.map((entry) => entry.id),
    );
    expect(impurity!.series[0]!.anchor).toBe('attribute-1-series-0');
    expect(impurity!.series[0]!.open).toBe(false);
    expect(impurity!.shelfLife.some((entry) => entry.proposal.isLongTerm)).toBe(true);
    // Its figures are the figure code's own, renamed: ids never collide with the first attribute's.
    const ids = runFigures(run).map((figure) => figure.id);
    expect(new Set(ids).size).toBe(ids.length);
    expect(impurity!.series[0]!.figures.map((figure) => figure!.id)).toEqual([
      'attribute-1-series-0-linearised',
      'attribute-1-series-0-curves',
      'attribute-1-series-0-residuals',
    ]);
    const q1e = impurity!.shelfLife.find((entry) => entry.figure)?.figure;
    expect(q1e?.id).toBe('attribute-1-q1e-25');
    expect(q1e?.title).toBe('Impurity B: Q1E shelf life at 25 °C');
    expect(q1e?.table?.rows.length).toBeGreaterThan(0);
    // The first attribute's sections keep today's ids.
    expect(model.series[0]!.anchor).toBe('series-0');
    expect(model.multiAttribute!.firstAttribute).toBe('Assay');
  });

  it('shows results reported below a limit by their text, in tables and figures', () => {
    const [impurity] = model.multiAttribute!.others;
    expect(impurity!.series[0]!.excluded[0]).toMatchObject({ time: '0.000', value: '<LOQ' });
    const curves = impurity!.series[0]!.figures.find((figure) => figure!.id.endsWith('-curves'))!;
    const first = curves.table!.rows[0]!;
    expect(first[1]).toBe('<LOQ');
    expect(first[2]).toBe('reported below the limit (<LOQ): excluded from the fit by the study’s rule');
    // Fitted values are drawn at its time, but no residual: "<LOQ" was never measured as a number.
    const residualColumns = curves.table!.columns.flatMap((column, index) =>
      column.endsWith(': residual') ? [index] : [],
    );
    expect(residualColumns.length).toBeGreaterThan(0);
    for (const index of residualColumns) expect(first[index]).toBe('—');
    const measured = curves.table!.rows.find((row) => row[2] === 'used')!;
    expect(residualColumns.some((index) => measured[index] !== '—')).toBe(true);
    const spec = runFigures(run).find((figure) => figure.id === 'attribute-1-series-0-curves')!.spec;
    const pointsLayer = (
      spec.layer as { encoding?: { shape?: { scale: { domain: string[]; range: string[] } } } }[]
    ).find((layer) => layer.encoding?.shape)!;
    // A shape of its own (not colour alone).
    expect(pointsLayer.encoding!.shape!.scale).toEqual({
      domain: ['used', 'excluded', 'below limit'],
      range: ['circle', 'cross', 'triangle-down'],
    });
    const q1e = impurity!.shelfLife.find((entry) => entry.figure)!.figure!;
    expect(q1e.table!.note).toMatch(
      /^Not drawn: 3 results reported below a limit .*Impurity B · FX-01 @ 25 °C at time 0.000 \(<LOQ\)/,
    );
    // The exclusion picker names the point by its text.
    const picker = model.exclusionForm.points.flatMap((group) => group.options.map((option) => option.label));
    expect(picker).toContain('Impurity B · FX-01 @ 25 °C · t = 0.000 month · <LOQ % (Sheet1!D2)');
  });

  it('tabulates the mass balance of each batch with its trend', () => {
    const balance = model.multiAttribute!.massBalance!;
    expect(balance.series.map((entry) => entry.label)).toEqual([
      'Batch FX-01 at 25 °C',
      'Batch FX-02 at 25 °C',
    ]);
    expect(balance.series[0]!.rows[1]).toEqual({
      time: '6',
      assay: '99.20',
      degradants: '0.1700',
      total: '99.37',
      percent: '99.07',
    });
    expect(balance.series[0]!.trend).toBe(
      'Trend of the total: −0.159 % of initial per month (95 % CI −0.210 to −0.108).',
    );
    expect(balance.series[1]!.trend).toMatch(/not estimated/);
    expect(massBalanceModel(undefined)).toBeNull();
  });

  it('uses the other attribute’s own criterion for its figures', () => {
    const figure = runFigures(run).find((entry) => entry.id === 'attribute-1-q1e-25')!;
    expect(JSON.stringify(figure.spec)).toContain(String(IMPURITY.upperLimit));
    expect(JSON.stringify(figure.spec)).not.toContain('"limit":95');
  });
});
