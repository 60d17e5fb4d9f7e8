/**
 * The readable text the `fit` command prints without `--json`: one block per series with the
 * verdict, a table of the rate-law fits and one of the straight-line plots, half-life, t90 and
 * shelf life; then the Arrhenius fit and the Q1E result per condition; then warnings.
 *
 * Numbers carry four significant figures (exponent form below 0.001 or from 10⁶ up); "—" marks a
 * value that is not estimable. The text is built from the JSON document, so both show the same.
 *
 * Throws nothing.
 *
 * Example: `formatNumber(0.000123456)` is '1.235e-4'; `formatNumber(null)` is '—'.
 */

import { inTimeUnit } from '../../shared/figures/time-unit-words.ts';
import type { ModelAveragedFigure } from '../../shared/kinetics/model-averaging.ts';
import type { PlausibleLawFigures } from '../../shared/kinetics/series-analysis.ts';
import type { FitDocument } from './fit-document.ts';

export function formatNumber(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude < 1e-3 || magnitude >= 1e6) return value.toExponential(3).replace('e+', 'e');
  return String(Number(value.toPrecision(4)));
}

const interval = (range: [number, number] | null | undefined) =>
  range ? `[${formatNumber(range[0])}, ${formatNumber(range[1])}]` : '—';

function table(header: string[], rows: string[][]): string[] {
  const widths = header.map((title, column) =>
    Math.max(title.length, ...rows.map((row) => (row[column] ?? '').length)),
  );
  const line = (cells: string[]) =>
    `  ${cells.map((cell, column) => cell.padEnd(widths[column] ?? 0)).join('  ')}`.trimEnd();
  return [line(header), ...rows.map(line)];
}

type SeriesEntry = FitDocument['series'][number];

function figureText(
  name: string,
  value:
    | { estimate: number | null; ci95: [number, number] | null; unit: string; reason?: string }
    | null
    | undefined,
) {
  if (!value) return null;
  if (value.estimate === null) return `${name}: not estimable${value.reason ? ` (${value.reason})` : ''}`;
  return `${name}: ${formatNumber(value.estimate)} ${value.unit}, CI ${interval(value.ci95)}`;
}

/** The plausible laws of a series whose order is not named, and the model averages (never of k). */
function plausibleBlock(plausible: PlausibleLawFigures, timeUnit: string): string[] {
  const lines = ['  Plausible laws (Akaike weight ≥ 0.1 or ΔAICc ≤ 2), each with its own figures:'];
  lines.push(
    ...table(
      ['order', 'weight', 'ΔAICc', 'k', 'CI of k', 'unit of k', 't90', 'CI of t90', 'time to limit'],
      plausible.laws.map((law) => [
        String(law.model),
        formatNumber(law.weight),
        formatNumber(law.deltaAicc),
        formatNumber(law.k),
        interval(law.kCi95),
        law.kUnit,
        formatNumber(law.t90?.estimate ?? null),
        interval(law.t90?.ci95 ?? null),
        formatNumber(law.timeToLimit?.lower?.estimate ?? law.timeToLimit?.upper?.estimate ?? null),
      ]),
    ),
  );
  const averaged = (label: string, figure: ModelAveragedFigure | undefined) => {
    if (!figure) return;
    lines.push(
      figure.estimate === null
        ? `  ${label} (model-averaged): — (${figure.reason ?? 'not averaged'})`
        : `  ${label} (model-averaged, unconditional interval): ${formatNumber(figure.estimate)} ${timeUnit}, CI ${interval(figure.interval)}; range over the laws ${interval(figure.range)}`,
    );
  };
  averaged('t90', plausible.modelAveraged.t90);
  averaged('Time to lower limit', plausible.modelAveraged.timeToLimit?.lower);
  averaged('Time to upper limit', plausible.modelAveraged.timeToLimit?.upper);
  lines.push(
    '  (Model averages: Burnham & Anderson 2002 §4.3; k is never averaged, its unit differs by order.)',
  );
  return lines;
}

function seriesBlock(entry: SeriesEntry, confidence: string, timeUnit: string): string[] {
  const place = [
    entry.batch ? `batch ${entry.batch}` : null,
    entry.temperatureC === null ? null : `${entry.temperatureC} °C`,
  ]
    .filter((part) => part !== null)
    .join(', ');
  const lines = [`Series ${entry.id}${place ? ` (${place})` : ''}: ${entry.n} points`];
  if (!('models' in entry)) return [...lines, `  ${entry.verdict}`];
  lines.push(`  Verdict: ${entry.verdict}`, `  Error model: ${entry.errorModel}`);
  lines.push(
    ...table(
      ['order', 'k', `${confidence} CI of k`, 'unit of k', 'C0', 'AICc', 'weight', 'note'],
      entry.models.map((model) => [
        model.order === 'n' ? `n=${formatNumber(model.n ?? null)}` : String(model.order),
        formatNumber(model.k),
        interval(model.kCi95),
        model.kUnit,
        formatNumber(model.c0),
        formatNumber(model.aicc),
        formatNumber(model.weight),
        model.applicable ? '' : `not applicable: ${model.reason ?? ''}`,
      ]),
    ),
  );
  lines.push('  Straight-line plots (for reference):');
  lines.push(
    ...table(
      ['order', 'plot', 'slope', 'intercept', 'R²', 'k', 'note'],
      entry.linearized.map((plot) => [
        String(plot.order),
        plot.transform,
        formatNumber(plot.slope),
        formatNumber(plot.intercept),
        plot.r2 === null ? '—' : plot.r2.toFixed(5),
        formatNumber(plot.k),
        plot.applicable ? '' : (plot.reason ?? ''),
      ]),
    ),
  );
  for (const text of [
    figureText('  Half-life', entry.halfLife),
    figureText('  t90', entry.t90),
    figureText('  Time to lower limit', entry.timeToLimit?.lower),
    figureText('  Time to upper limit', entry.timeToLimit?.upper),
  ]) {
    if (text) lines.push(text);
  }
  if (entry.derivedReason) lines.push(`  ${entry.derivedReason}`);
  if ('plausible' in entry && entry.plausible) lines.push(...plausibleBlock(entry.plausible, timeUnit));
  if (entry.shelfLife) {
    const { estimate, model, line } = entry.shelfLife;
    const basis =
      model === null
        ? inTimeUnit(entry.shelfLife.reason ?? '', timeUnit)
        : `model ${model}, line ${line ?? '—'}`;
    lines.push(
      `  ICH Q1E statistical estimate of its line: ${estimate === null ? 'not reached' : `${formatNumber(estimate)} ${timeUnit}`} (${basis}; the proposal is per condition, below)`,
    );
  }
  // The verdict already says when the order is not identified.
  for (const warning of entry.warnings)
    if (warning.code !== 'order-not-identified') lines.push(`  ! ${warning.message}`);
  return lines;
}

export function fitReport(document: FitDocument): string {
  const confidence = `${Number((document.confidenceLevel * 100).toPrecision(4))} %`;
  const lines = [
    `${document.file} — sheet ${document.sheet}; time in ${document.timeUnit}, values in ${document.valueUnit}`,
    '',
  ];
  for (const entry of document.series) lines.push(...seriesBlock(entry, confidence, document.timeUnit), '');
  const arrhenius = document.arrhenius;
  if (arrhenius) {
    lines.push('Arrhenius');
    if ('points' in arrhenius && arrhenius.points && arrhenius.excludedSeries) {
      lines.push(
        `  Order used: ${arrhenius.order ?? '—'} (${arrhenius.orderSource ?? '—'}); k in ${arrhenius.kUnit ?? '—'}`,
      );
      lines.push(
        ...table(
          ['°C', 'k', 'series'],
          arrhenius.points.map((point) => [
            String(point.temperatureC),
            formatNumber(point.k),
            point.seriesIds.join(', '),
          ]),
        ),
      );
      for (const excluded of arrhenius.excludedSeries)
        lines.push(`  left out: ${excluded.id} — ${excluded.reason}`);
    }
    if (arrhenius.eaJPerMol !== null) {
      const kilo = (value: number) => formatNumber(value / 1000);
      const ci = arrhenius.eaCi95 ? `[${kilo(arrhenius.eaCi95[0])}, ${kilo(arrhenius.eaCi95[1])}]` : '—';
      lines.push(
        `  Ea = ${kilo(arrhenius.eaJPerMol)} kJ/mol, CI ${ci}; ln A = ${formatNumber(arrhenius.lnA)}`,
      );
    }
    if ('eyring' in arrhenius && arrhenius.eyring?.deltaHJPerMol != null) {
      const eyring = arrhenius.eyring;
      const kilo = (value: number) => formatNumber(value / 1000);
      const ci = (pair: [number, number] | null, scale: (value: number) => string) =>
        pair ? `[${scale(pair[0])}, ${scale(pair[1])}]` : '—';
      lines.push(
        `  Eyring: ΔH‡ = ${kilo(eyring.deltaHJPerMol as number)} kJ/mol, CI ${ci(eyring.deltaHCi95, kilo)}; ΔS‡ = ${formatNumber(eyring.deltaSJPerMolK)} J/(mol·K), CI ${ci(eyring.deltaSCi95, formatNumber)}`,
      );
    }
    if ('q10' in arrhenius && arrhenius.q10) {
      const q10 = arrhenius.q10;
      lines.push(
        `  Q10 over ${q10.fromC} → ${q10.toC} °C (from Ea) = ${formatNumber(q10.estimate)}, CI ${interval(q10.ci95)}`,
      );
    }
    if ('prediction' in arrhenius && arrhenius.prediction) {
      const prediction = arrhenius.prediction;
      lines.push(
        `  k at ${prediction.temperatureC} °C = ${formatNumber(prediction.k)}, CI ${interval(prediction.kCi95)}${prediction.extrapolation ? ' (extrapolated)' : ''}`,
      );
      if (prediction.t90)
        lines.push(
          `  t90 at ${prediction.temperatureC} °C = ${formatNumber(prediction.t90.estimate)} ${document.timeUnit}, CI ${interval(prediction.t90.ci)}`,
        );
    }
    if (arrhenius.notApplicableReason) lines.push(`  Not applicable: ${arrhenius.notApplicableReason}`);
    lines.push('');
  }
  for (const condition of document.shelfLife ?? []) {
    const where = condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`;
    const role = condition.role === 'not-declared' ? 'not declared' : condition.role;
    lines.push(`Shelf life (ICH Q1E), ${where} (${role})`);
    lines.push(
      `  Statistical estimate: ${condition.shelfLife === null ? 'not reached' : `${formatNumber(condition.shelfLife)} ${document.timeUnit}`}`,
    );
    lines.push(
      `  ${condition.seriesIds.join(', ')}; scale ${condition.transform}; model ${condition.model ?? '—'}`,
    );
    // The engine's sentence says "time units"; the report knows the study's unit and says it.
    lines.push(`  ${inTimeUnit(condition.notApplicableReason ?? condition.reason ?? '', document.timeUnit)}`);
    const limit = condition.extrapolationLimit;
    if (condition.role === 'long-term') {
      lines.push(
        `  Extrapolation limit: ${limit.valueMonths === null ? '—' : `${formatNumber(limit.valueMonths)} months`} (${limit.rule}${limit.section ? `; ${limit.section}` : ''})`,
      );
      if (limit.branchText) lines.push(`  Branch: ${limit.branchText}`);
      for (const finding of limit.findings) lines.push(`  Data: ${finding}`);
      for (const assumption of limit.assumptions) lines.push(`  Assumption: ${assumption}`);
      for (const note of limit.notes) lines.push(`  Note: ${note}`);
    }
    lines.push(
      `  Proposed shelf life: ${condition.proposedShelfLifeMonths === null ? `none (${condition.proposedReason ?? ''})` : `${condition.proposedShelfLifeMonths} months`}`,
    );
    if (condition.proposedShelfLifeMonths !== null) lines.push(`  ${condition.proposalStatement}`);
    lines.push('');
  }
  if (document.warnings.length > 0) {
    lines.push('Warnings');
    for (const warning of document.warnings) lines.push(`  ! ${warning}`);
  }
  return `${lines.join('\n').trimEnd()}\n`;
}
