import { describe, expect, it } from 'vitest';
import { FORMATION_ORDER_WHY } from '../../../../shared/figures/arrhenius-rate-words.ts';
import { analyseDataset } from '../../../../shared/kinetics/analyse-dataset.ts';
import { formationSeries } from '../../../../shared/kinetics/dataset-arrhenius-fixture.ts';
import { reportFixture } from './render-fixture.ts';
import { multiAttributeReportFixture } from './render-fixture-attributes.ts';
import { arrheniusSummary, attributeArrheniusSummary } from './report-context-summaries.ts';
import { resultTableGroups } from './report-context-tables.ts';
import { loadDefaultTemplate } from './template-default.ts';
import { compileReportTemplate } from './template-engine.ts';

/*
 * The report of an attribute whose Arrhenius line engine 0.4.0 fits to the zero-order formation
 * rate k_f = −k₀ (`rateSense` 'formation'): the temperature-dependence paragraph, its table and
 * the context say "formation rate" and why the order is zero; a falling attribute's stay as they
 * were (the one-attribute context is pinned in `report-attributes.test.ts`). Data: the invented
 * degradant of `dataset-arrhenius-fixture.ts`, and the three-attribute fixture (Impurity B and
 * Water rise at 25 and 40 °C).
 */

const CAPTION = `Temperature dependence (Arrhenius; Eyring ΔH‡ and ΔS‡ through the same formation rates): formation rates k_f, ${FORMATION_ORDER_WHY}`;

/** Text of the rendered default template's temperature section, tags removed. */
function temperatureSection(html: string): string {
  const start = html.indexOf('aria-labelledby="temperature-heading"');
  return html
    .slice(start, html.indexOf('</section>', start))
    .replace(/<[^>]+>/g, ' ')
    .replace(/&#x27;|&#39;/g, "'")
    .replace(/\s+/g, ' ');
}

describe('the report context of an attribute fitted on its formation rate', () => {
  const analysis = analyseDataset(formationSeries(0.002), {
    direction: 'increasing',
    upperLimit: 1,
    storageTemperatureC: 25,
  });

  it('says why the order is zero and gives rateSense on the attribute entry', () => {
    const summary = attributeArrheniusSummary(analysis)!;
    expect(summary.rateSense).toBe('formation');
    expect(summary.orderWhy).toBe(FORMATION_ORDER_WHY);
    expect(summary.prediction?.kUnit).toBe('%/month');
    expect(summary.prediction?.t90).toBeNull();
    // summary.arrhenius keeps the fields it always had (organisations' templates use them).
    expect('rateSense' in arrheniusSummary(analysis)!).toBe(false);
  });

  it('captions and labels its Arrhenius table with the formation rate', () => {
    const [table] = resultTableGroups(analysis).temperature;
    expect(table!.caption).toBe(CAPTION);
    const labels = table!.rows.map((row) => row.quantity);
    expect(labels).toEqual(
      expect.arrayContaining([
        'R² of ln k_f against 1/T',
        'Formation rate k_f at 40 °C (2 series)',
        'Formation rate k_f predicted at 25 °C',
      ]),
    );
    expect(labels.some((label) => /^k /.test(String(label)))).toBe(false);
  });

  it('an analyst’s zero order on it is still a formation rate, fixed by the analyst', () => {
    const fixed = analyseDataset(formationSeries(0.002), {
      direction: 'increasing',
      upperLimit: 1,
      storageTemperatureC: 25,
      order: 0,
    });
    expect(fixed.arrhenius!.orderSource).toBe('analyst');
    expect(resultTableGroups(fixed).temperature[0]!.caption).toBe(
      'Temperature dependence (Arrhenius; Eyring ΔH‡ and ΔS‡ through the same formation rates): formation rates k_f of the zero order fixed by the analyst',
    );
    expect(attributeArrheniusSummary(fixed)!.orderWhy).toBe('the order fixed by the analyst');
  });
});

describe('the default template’s temperature dependence of a three-attribute run', () => {
  const { context, figures } = multiAttributeReportFixture();
  const markup = new Map(
    figures.map((figure, index) => [
      figure.id,
      { number: index + 1, title: figure.title, description: figure.description, svg: '<svg></svg>' },
    ]),
  );
  const html = compileReportTemplate(loadDefaultTemplate()).render({ context, figures: markup, paper: 'A4' });
  const section = temperatureSection(html);
  const [assay, impurity] = context.attributes;

  it('gives the rising attribute its formation rate, and the assay its k', () => {
    expect(assay!.arrhenius!.rateSense).toBe('loss');
    expect(impurity!.arrhenius!.rateSense).toBe('formation');
    const impurityPart = section.slice(section.indexOf('Impurity B'), section.indexOf('Water'));
    // The fixture fixes zero order (FIXTURE_OPTIONS): still the formation rate of a rising attribute.
    expect(impurityPart).toContain(
      'from formation rates k_f = dC/dt of zero order at 25 °C, 40 °C (the order fixed by the analyst).',
    );
    expect(impurityPart).toMatch(/Predicted formation rate k_f at 25 °C: \S+ \(% label claim\)\/month\./);
    expect(impurityPart).toContain(
      'Temperature dependence (Arrhenius; Eyring ΔH‡ and ΔS‡ through the same formation rates): formation rates k_f of the zero order fixed by the analyst',
    );
    expect(impurityPart).toContain('Formation rate k_f at 40 °C (1 series)');
    expect(impurityPart).not.toContain('Predicted k at');
    expect(impurityPart).not.toContain('lowest summed AICc');
    const assayPart = section.slice(0, section.indexOf('Impurity B'));
    expect(assayPart).toMatch(/from rate constants of first order at 25 °C, 40 °C \(/);
    expect(assayPart).toContain('Predicted k at 25 °C');
    expect(assayPart).not.toContain('formation');
  });

  it('prints the one-attribute report’s paragraph as before', () => {
    const { context: one, figures: oneFigures } = reportFixture();
    const oneMarkup = new Map(
      oneFigures.map((figure, index) => [
        figure.id,
        { number: index + 1, title: figure.title, description: figure.description, svg: '<svg></svg>' },
      ]),
    );
    const text = temperatureSection(
      compileReportTemplate(loadDefaultTemplate()).render({ context: one, figures: oneMarkup, paper: 'A4' }),
    );
    expect(text).toContain(
      'from rate constants of first order at 25 °C, 40 °C (the order fixed by the analyst).',
    );
    expect(text).toContain('Predicted k at 25 °C: ');
    expect(text).not.toContain('formation');
  });
});
