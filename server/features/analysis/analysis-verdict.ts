import { FORMATION_ORDER_WHY, isFormationRate } from '../../../shared/figures/arrhenius-rate-words.ts';
import { MODEL_NAMES } from '../../../shared/figures/results-table.ts';
import { formatSignificant } from '../../../shared/figures/significant-figures.ts';
import type { DatasetAnalysis } from '../../../shared/kinetics/analyse-dataset.ts';
import type { IntegerOrder } from '../../../shared/kinetics/types.ts';
import type { NumberCell } from './number-cell.ts';

/**
 * The words of the analysis page: the verdict summary at the top, warnings grouped by kind, and
 * engine messages with their long decimals rounded for reading.
 */

/** Long decimals inside engine messages ("27.949325675939914") written with 4 significant figures. */
export function readableNumbers(text: string): string {
  return text.replace(/-?\d+\.\d{5,}(?:e[-+]?\d+)?/gi, (number) => formatSignificant(Number(number), 4));
}

const WARNING_TITLES: Record<string, string> = {
  'low-fraction-reacted': 'Little of the initial value has reacted',
  'order-not-identified': 'Reaction order not identified',
  'analyst-order-disfavoured': 'The data disfavour the analyst’s order',
  'possible-outliers': 'Possible outliers',
  'systematic-misfit': 'Systematic misfit',
  'not-converged': 'A fit did not converge',
  extrapolation: 'Extrapolation beyond the observed time',
  'series-not-analysed': 'Series not analysed',
  'order-disagreement': 'Series disagree on the order',
  'no-order-named': 'No series named an order',
  'arrhenius-extrapolation': 'Arrhenius extrapolation',
  'non-finite-replaced': 'Numbers not estimable',
};

/** Why the Arrhenius rate constants are of their order, in the verdict's words. */
const ARRHENIUS_ORDER_WHY: Record<string, string> = {
  analyst: 'order fixed by the analyst',
  study: 'the study’s working order, as no series named an order',
  data: 'the order with the lowest summed AICc over the series',
  formation: FORMATION_ORDER_WHY,
};

/** "Formation rate k_f predicted at 25 °C" inside a sentence; "k predicted at …" stays as it is. */
const lowerFirst = (text: string) => `${text.charAt(0).toLowerCase()}${text.slice(1)}`;

interface ShelfLifeEntry {
  condition: string;
  scale: string;
  model: string;
  reason: string;
  beyondData: boolean;
  limiting: string | null;
  accelerated: boolean;
  cell: NumberCell;
  proposal: {
    recorded: boolean;
    isLongTerm: boolean;
    proposed: string;
    statement: string;
    reason: string;
    assumptions: string[];
  };
}

interface ArrheniusEntry {
  order: string | undefined;
  rows: { label: string; cell: NumberCell }[];
}

/** One sentence per headline result: the Q1E shelf life, the Arrhenius result, how the order was chosen. */
export function verdictSummary(
  analysis: DatasetAnalysis,
  shelfLife: readonly ShelfLifeEntry[],
  arrheniusModel: ArrheniusEntry | null,
  fixedOrder: IntegerOrder | undefined,
): string[] {
  const summary: string[] = [];
  for (const entry of shelfLife) {
    if (entry.proposal.recorded && !entry.proposal.isLongTerm) continue;
    if (entry.proposal.recorded) {
      const count = entry.proposal.assumptions.length;
      summary.push(
        `Proposed shelf life at ${entry.condition}: ${entry.proposal.proposed === '—' ? 'none' : entry.proposal.proposed}. ${entry.proposal.statement}${count === 0 ? '' : ` It rests on ${count} assumption${count === 1 ? '' : 's'} about what the study does not state (see Shelf life).`}`,
      );
      continue;
    }
    if (entry.accelerated) continue;
    summary.push(
      entry.cell.value
        ? `Statistical shelf-life estimate at ${entry.condition} (ICH Q1E, ${entry.scale}, ${entry.model}): ${entry.cell.text} ${entry.cell.unit}${entry.limiting ? `, limited by ${entry.limiting}` : ''}${entry.beyondData ? ', beyond the observed data' : ''}; no extrapolation limit was applied in this run.`
        : `No Q1E shelf life at ${entry.condition}: ${entry.reason}`,
    );
  }
  if (
    shelfLife.length > 0 &&
    shelfLife.every((entry) => entry.proposal.recorded && !entry.proposal.isLongTerm)
  ) {
    summary.push(
      'No shelf life is proposed: no condition of the data is the long-term condition the study declares (its storage temperature).',
    );
  }
  const ea = arrheniusModel?.rows.find((row) => row.cell.key.endsWith('|activation-energy'));
  const predicted = arrheniusModel?.rows.find((row) => row.cell.key.endsWith('|predicted-k'));
  const deltaH = arrheniusModel?.rows.find((row) => row.cell.key.endsWith('|enthalpy-of-activation'));
  const deltaS = arrheniusModel?.rows.find((row) => row.cell.key.endsWith('|entropy-of-activation'));
  if (ea?.cell.value) {
    const source = ARRHENIUS_ORDER_WHY[String(analysis.arrhenius?.orderSource)] ?? '';
    // A formation fit of zero order by rule names its rate in `source` already.
    const rates = !isFormationRate(analysis.arrhenius)
      ? `${arrheniusModel!.order} rate constants, `
      : analysis.arrhenius?.orderSource === 'formation'
        ? ''
        : `${arrheniusModel!.order} formation rates, `;
    summary.push(
      `Arrhenius (${rates}${source}): Ea = ${ea.cell.text} ${ea.cell.unit}${ea.cell.hasInterval ? ` (95 % CI ${ea.cell.interval})` : ''}${predicted?.cell.value ? `; ${lowerFirst(predicted.label)} ${predicted.cell.text} ${predicted.cell.unit}` : ''}${deltaH?.cell.value ? `; Eyring ΔH‡ = ${deltaH.cell.text} ${deltaH.cell.unit}${deltaH.cell.hasInterval ? ` (CI ${deltaH.cell.interval})` : ''}` : ''}${deltaS?.cell.value ? `, ΔS‡ = ${deltaS.cell.text} ${deltaS.cell.unit}${deltaS.cell.hasInterval ? ` (CI ${deltaS.cell.interval})` : ''}` : ''}.`,
    );
  }
  const noneNamed = analysis.warnings.find((warning) => warning.code === 'no-order-named');
  if (noneNamed) summary.push(`Warning: ${readableNumbers(noneNamed.message)}`);
  const analysed = analysis.series.filter((result) => result.analysis);
  const named = analysed.filter(
    (result) => result.analysis!.orderSource === 'data' && result.analysis!.selectedOrder !== null,
  );
  const fixed = fixedOrder !== undefined;
  summary.push(
    fixed
      ? `Reaction order fixed by the analyst at ${MODEL_NAMES[String(fixedOrder)]} for all ${analysed.length} series; each series’ section says what its data alone show.`
      : `Reaction order from the data: named for ${named.length} of ${analysed.length} series${named.length < analysed.length ? ' (the others cannot tell the orders apart; each shows its plausible laws and model-averaged t90; see each series)' : ''}.`,
  );
  const working = analysed.filter((result) => result.analysis!.orderSource === 'study');
  if (!fixed && working.length > 0) {
    summary.push(
      `Working order from the study (${MODEL_NAMES[String(working[0]!.analysis!.reportedOrder)]}: ${working[0]!.analysis!.workingOrderReason ?? ''}) used for the ${working.length} series whose data name no order; it is the protocol's order, not one the data chose.`,
    );
  }
  if (analysed.length < analysis.series.length)
    summary.push(`${analysis.series.length - analysed.length} series could not be analysed; see Warnings.`);

  return summary;
}

/** Warnings of the dataset and of every series, grouped by kind (collapsed when there are many). */
export function groupedWarnings(analysis: DatasetAnalysis) {
  const allWarnings = [
    ...analysis.warnings.map((warning) => ({
      where: 'dataset',
      code: warning.code,
      message: readableNumbers(warning.message),
    })),
    ...analysis.series.flatMap((result) =>
      (result.analysis?.warnings ?? []).map((warning) => ({
        where: result.id,
        code: warning.code,
        message: readableNumbers(warning.message),
      })),
    ),
  ];
  const warningGroups = [...new Set(allWarnings.map((warning) => warning.code))].map((code) => {
    const items = allWarnings.filter((warning) => warning.code === code);
    return { code, title: WARNING_TITLES[code] ?? code, count: items.length, items, open: items.length <= 3 };
  });
  return warningGroups;
}
