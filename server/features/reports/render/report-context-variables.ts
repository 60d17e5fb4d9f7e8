/**
 * The variables a report template can use, with what each holds — the list the template editor
 * shows beside the helpers (`TEMPLATE_HELPERS`). It describes the object `buildReportContext`
 * returns; a unit test checks that every path listed exists in a built context and that every
 * top-level field of the context is listed, so the two cannot drift apart.
 *
 * Paths use Handlebars notation; `[]` marks a list (iterate with {{#each}}).
 */

export interface TemplateVariableDescription {
  path: string;
  description: string;
}

export const TEMPLATE_VARIABLES: readonly TemplateVariableDescription[] = [
  { path: 'organisation.name', description: 'Name of the laboratory organisation.' },
  { path: 'organisation.timeZone', description: 'IANA time zone used for every date (e.g. Europe/Berlin).' },
  { path: 'report.number', description: 'Report number, e.g. RL-2026-0007.' },
  { path: 'report.version', description: 'Version of the report (1, 2, …); a new render is a new version.' },
  { path: 'report.title', description: 'Report title.' },
  { path: 'report.author', description: 'Name of the person who created the report.' },
  {
    path: 'report.createdAt',
    description: 'When the report version was created (date; print with isoDate).',
  },
  {
    path: 'report.createdDay',
    description: 'The day it was created, YYYY-MM-DD, in the organisation time zone.',
  },
  { path: 'study.title', description: 'Study title.' },
  { path: 'study.product', description: 'Product under test.' },
  { path: 'study.attribute', description: 'Measured attribute, e.g. Assay.' },
  { path: 'study.unit', description: 'Unit of the measured values.' },
  {
    path: 'study.direction',
    description: 'decreasing, increasing or either: how the attribute moves on storage.',
  },
  { path: 'study.lowerLimit', description: 'Lower acceptance limit, or null.' },
  { path: 'study.upperLimit', description: 'Upper acceptance limit, or null.' },
  {
    path: 'study.acceptanceCriterion',
    description: 'The acceptance criterion in words, e.g. "not less than 95 % of label claim".',
  },
  {
    path: 'study.storage.text',
    description: 'Long-term storage condition in words, e.g. "25 °C / 60 % RH".',
  },
  { path: 'study.storage.temperatureC', description: 'Storage temperature in °C, or null.' },
  { path: 'study.storage.humidityPercent', description: 'Storage relative humidity in %, or null.' },
  { path: 'study.batches[]', description: 'Batch (lot) identifiers on test.' },
  { path: 'study.conditions[]', description: 'Temperatures present in the data, e.g. "25 °C".' },
  { path: 'study.notes', description: 'Free-text notes of the study.' },
  { path: 'analysis.runId', description: 'Id of the analysis run the report shows.' },
  { path: 'analysis.runAt', description: 'When the analysis ran (date).' },
  { path: 'analysis.runBy', description: 'Who ran the analysis.' },
  {
    path: 'analysis.supersedesRunId',
    description: 'The earlier run this one replaces (after an exclusion), or null.',
  },
  {
    path: 'analysis.engineVersion',
    description: 'Version of the kinetics engine that computed the results.',
  },
  { path: 'analysis.datasetId', description: 'Id of the dataset analysed.' },
  { path: 'analysis.datasetSha256', description: 'SHA-256 of the dataset analysed (its fingerprint).' },
  {
    path: 'analysis.confidenceLevel',
    description: 'Confidence level of the intervals, e.g. 0.95 (print with percent).',
  },
  { path: 'analysis.seriesCount', description: 'Number of series (batch × condition) analysed.' },
  { path: 'analysis.pointsUsed', description: 'Number of measured points used.' },
  {
    path: 'summary.headline[]',
    description: 'The verdict in sentences: the shelf life per condition, else each series’ order verdict.',
  },
  {
    path: 'summary.series[]',
    description:
      'Per series: id, batch, temperatureC, verdict, reportedOrder, points, fractionReacted, k / halfLife / t90 / timeToLowerLimit / timeToUpperLimit ({ estimate, interval, unit } or null), warnings[].',
  },
  {
    path: 'summary.shelfLife[]',
    description:
      'Per storage condition: temperatureC, role (long-term, intermediate, accelerated, not-declared), seriesIds[], shelfLife (the statistical estimate), timeUnit, model, limitingLine, status, reason, estimateStatement, proposedShelfLife (in timeUnit), proposedShelfLifeMonths, proposedReason, estimateExceedsLimit, extrapolationLimit, statement.',
  },
  {
    path: 'summary.proposals[]',
    description:
      'The long-term condition(s) with a shelf-life proposal: as summary.shelfLife[], with extrapolationLimit { value, valueMonths, longTermMonths, rule, branch, branchText, section, assumptions[], findings[], notes[] }.',
  },
  {
    path: 'summary.arrhenius',
    description:
      'Arrhenius fit or null: order, orderWhy (why that order), noOrderNamedWarning (text or null), eyring { deltaHKJPerMol, deltaHInterval, deltaSJPerMolK, deltaSInterval } or null, q10 { fromC, toC, estimate, interval } or null, temperatures[], activationEnergyKJPerMol, activationEnergyInterval, rSquared, prediction { temperatureC, k, kInterval, kUnit, t90, t90Interval, extrapolated }, notApplicableReason.',
  },
  {
    path: 'resultTables[]',
    description:
      'Results tables (same rows and figures as the analysis screen); print each with {{table this}}.',
  },
  {
    path: 'tables.shelfLife[]',
    description:
      'The results tables of the shelf-life part: the proposal per condition and the ICH Q1E estimates; print each with {{table this}}.',
  },
  {
    path: 'tables.temperature[]',
    description:
      'The temperature-dependence table (Arrhenius, Eyring), when the data hold several temperatures.',
  },
  {
    path: 'tables.series[]',
    description:
      'Per-series detail tables: derived times, plausible laws, rate-law comparison, straight-line plots (an appendix).',
  },
  {
    path: 'seriesBasis',
    description:
      "One row per series: points, order reported and what the data say, with shared sentences said once as the table's notes; print with {{table seriesBasis}}.",
  },
  {
    path: 'figureGroups.shelfLife[]',
    description: 'The ICH Q1E shelf-life figures (id, number, title, description); print with {{figure id}}.',
  },
  {
    path: 'figureGroups.temperature[]',
    description: 'The Arrhenius figure, when there is one.',
  },
  {
    path: 'figureGroups.series[]',
    description: "Each series' data and fitted curves.",
  },
  {
    path: 'attributes[]',
    description:
      "Each attribute of the study in the study's order (one entry for a study of one attribute): number, name, unit, direction, lowerLimit, upperLimit, acceptanceCriterion, limiting (true when it sets the study's shelf life), outcome { proposed (e.g. \"28 months\" or null), proposedShelfLifeMonths, reason, statement }, series[] and shelfLife[] and proposals[] and arrhenius (as in summary, plus rateSense: 'formation' when the line is of the zero-order formation rate k_f = dC/dt of an attribute that increases, its prediction a formation rate in kUnit, else 'loss'), resultsTable (one row per batch and condition; {{table resultsTable}}), proposalTable and estimateTable (or null), tables { shelfLife[], temperature[], series[] }, seriesBasis, figureGroups { shelfLife[], shelfLifeAtStorage[], shelfLifeOther[], temperature[], series[] }, exclusions[], censored[] (seriesId, time, timeUnit, text, cell, handling), censoredRule, censoredRuleText, dataTables[], warnings[] (repeats said once), seriesCount, pointsUsed, methodStatement { paragraphs[], ownParagraphs[] (those no earlier attribute has) }.",
  },
  {
    path: 'studyShelfLife',
    description:
      'The study\'s proposed shelf life (ICH Q1E Appendix A: the shortest of the attributes\'): proposed (e.g. "28 months", or null), proposedShelfLife, proposedShelfLifeMonths, timeUnit, limitingAttributes[], limitingText ("Impurity B", "Assay and Water"), reason (why none), statement, rows[] { attribute, criterion, proposed, limiting, reason, statement } and table ({{table studyShelfLife.table}}). For a study of one attribute, built from that attribute.',
  },
  {
    path: 'massBalance',
    description:
      'Assay plus degradation products against the initial value, or null when the study marks no assay and degradation product: assayAttribute, degradantAttributes[], degradantText, unit, timeUnit, statement, summary (one sentence for a summary page), table (per batch and condition with the trend) and pointsTable (every pull); print with {{table massBalance.table}}.',
  },
  {
    path: 'temperatureLogs[]',
    description:
      'Temperature-log assessments attached to this version (excursion assessments), in order; empty when none. Each: number, id, title, fileName, sha256, assessedAt, assessedBy, engineVersion, figureId (print with {{figure figureId}}: the figure as drawn when the log was assessed), summary, excursions and gaps (tables: {{table summary}}), impact (a table, or null when no study priced the log), impactNotes[], method.',
  },
  {
    path: 'dataTables[]',
    description: 'Measured data per series with exclusions and reasons; print each with {{table this}}.',
  },
  {
    path: 'figures[]',
    description: 'Figures of the report: id, number, title, description; print with {{figure id}}.',
  },
  {
    path: 'exclusions[]',
    description: 'Excluded points: seriesId, time, timeUnit, value, valueUnit, reason, cell.',
  },
  {
    path: 'warnings[]',
    description: 'Warnings of the analysis in sentences (low fraction reacted, outliers, extrapolation…).',
  },
  { path: 'methodStatement.paragraphs[]', description: 'The method statement, one paragraph per item.' },
  { path: 'methodStatement.references[]', description: 'The published methods the analysis follows.' },
  { path: 'caution', description: 'The caution that estimates support, not replace, qualified judgement.' },
  {
    path: 'signatures.placeholder',
    description: 'Text shown on the signatures page before the report is signed.',
  },
  {
    path: 'signatures.entries[]',
    description:
      'Applied signatures (name, meaning, signedAt, timeZone, comment, checklistConfirmed[]: the review checklist items the signer confirmed); empty until signed.',
  },
];
