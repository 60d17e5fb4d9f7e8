/**
 * What the temperature-log pages show, formatted once here so the templates only place it: the
 * stored document's figures with their units, each excursion, gap and window as a table row, and
 * the form's fields with their values, hints and errors.
 */
import type { TemperatureLogField } from '../../../shared/api/temperature-logs.ts';
import { formatSignificant } from '../../../shared/figures/significant-figures.ts';
import type { Estimate } from '../../../shared/kinetics/temperature/excursion-impact.ts';
import type { TemperatureLogDocument } from '../../../shared/kinetics/temperature/temperature-log-document.ts';
import { TEMPERATURE_LOG_CAUTION } from '../../../shared/kinetics/temperature/temperature-log-text.ts';
import { TIME_UNITS } from '../../../shared/kinetics/units.ts';
import type { StudyImpact } from './study-impact.ts';

const celsius = (value: number) => `${value.toFixed(2)} °C`;
const figure = (value: number) => String(Number(value.toPrecision(6)));

/** "2026-07-15 13:45 UTC" from an ISO instant, or the elapsed time with its unit. */
function when(time: number, at: string | undefined, unit: string): string {
  return at ? `${at.slice(0, 16).replace('T', ' ')} UTC` : `${figure(time)} ${unit}`;
}

export function assessmentView(document: TemperatureLogDocument) {
  const unit = document.timeUnit;
  const duration = (value: number) => `${figure(value)} ${unit}`;
  const rangeText = document.range
    ? `${document.range.minC === null ? 'no lower limit' : celsius(document.range.minC)} to ${document.range.maxC === null ? 'no upper limit' : celsius(document.range.maxC)}`
    : 'not given';
  return {
    summary: [
      { label: 'Mean kinetic temperature, whole log', value: celsius(document.mktC) },
      {
        label: document.window
          ? `Highest MKT over ${duration(document.window.length)}`
          : 'Highest window MKT',
        value: document.warmestWindow
          ? `${celsius(document.warmestWindow.mktC)} (from ${when(document.warmestWindow.start, document.warmestWindow.startAt, unit)})`
          : 'none: the log is shorter than one window',
      },
      { label: 'Minimum', value: celsius(document.minC) },
      { label: 'Maximum', value: celsius(document.maxC) },
      { label: 'Time-weighted mean', value: celsius(document.meanC) },
      { label: 'Labelled range', value: rangeText },
      {
        label: 'Time outside the range',
        value:
          document.timeAbove === null
            ? 'not assessed (no range given)'
            : `${duration(document.timeAbove)} above, ${duration(document.timeBelow ?? 0)} below`,
      },
      {
        label: 'Log',
        value: `${document.readings.toLocaleString('en-GB')} readings${document.startAt ? ` from ${when(0, document.startAt, unit)} to ${when(document.duration, document.endAt ?? undefined, unit)}` : ''}, ${duration(document.duration)}; median interval ${duration(document.medianInterval)}`,
      },
    ],
    excursions: document.excursions.map((excursion) => ({
      side: excursion.side === 'above' ? 'Above the range' : 'Below the range',
      start: when(excursion.start, excursion.startAt, unit),
      duration: duration(excursion.duration),
      peak: `${celsius(excursion.peakC)} at ${when(excursion.peakTime, excursion.peakAt, unit)}`,
      readings: excursion.readings,
    })),
    gaps: document.gaps.map((gap) => ({
      start: when(gap.start, gap.startAt, unit),
      end: when(gap.end, gap.endAt, unit),
      duration: duration(gap.duration),
    })),
    windowCount: document.windows.length,
    windowLength: document.window ? duration(document.window.length) : '',
    windowStep: document.window ? duration(document.window.step) : '',
    /** The five warmest windows, warmest first; every window is in the JSON download. */
    warmestWindows: [...document.windows]
      .sort((a, b) => b.mktC - a.mktC)
      .slice(0, 5)
      .map((window) => ({
        start: when(window.start, window.startAt, unit),
        end: when(window.end, window.endAt, unit),
        mkt: celsius(window.mktC),
        max: celsius(window.maxC),
        covered: duration(window.coveredDuration),
      })),
    method: document.method,
    caution: TEMPERATURE_LOG_CAUTION,
  };
}

interface FieldSpec {
  name: TemperatureLogField;
  label: string;
  hint: string;
  decimal?: boolean;
  placeholder?: string;
}

const FIELDS: Record<'log' | 'columns' | 'settings', FieldSpec[]> = {
  log: [
    {
      name: 'title',
      label: 'What the log is of',
      hint: 'e.g. "Store room B, July 2026" or "Shipment 2026-118, north depot".',
    },
  ],
  columns: [
    {
      name: 'timeColumn',
      label: 'Time column',
      hint: 'Header text or column letter: date-times, or elapsed times.',
    },
    { name: 'temperatureColumn', label: 'Temperature column', hint: 'Header text or column letter.' },
    { name: 'sheet', label: 'Sheet (workbooks)', hint: 'Leave blank for the first sheet.' },
    {
      name: 'headerRow',
      label: 'Header row',
      hint: 'Row of the column headers; 0 when there is none.',
      decimal: true,
    },
  ],
  settings: [
    {
      name: 'rangeMinC',
      label: 'Lowest labelled temperature (°C)',
      hint: 'Blank when the label has no lower limit.',
      decimal: true,
    },
    {
      name: 'rangeMaxC',
      label: 'Highest labelled temperature (°C)',
      hint: 'e.g. 25 for "store below 25 °C".',
      decimal: true,
    },
    {
      name: 'activationEnergyKJPerMol',
      label: 'ΔH (kJ/mol)',
      hint: '83.144 unless the product’s own studies give another value (USP <1160>).',
      decimal: true,
    },
    { name: 'window', label: 'Rolling window', hint: 'e.g. "30 d" for storage, "24 h" for a shipment.' },
    { name: 'windowStep', label: 'Window step', hint: 'Blank: a thirtieth of the window.' },
    {
      name: 'maxInterval',
      label: 'Longest interval that is not a gap',
      hint: 'Blank: twice the median interval.',
    },
  ],
};

export const FORM_DEFAULTS: Partial<Record<TemperatureLogField, string>> = {
  headerRow: '1',
  activationEnergyKJPerMol: '83.144',
  window: '30 d',
};

export function formView(
  values: Partial<Record<TemperatureLogField, string>>,
  errors: Partial<Record<string, string>>,
  studies: readonly { id: number; title: string; product: string; attribute: string; unit: string }[] = [],
) {
  const fields = (group: keyof typeof FIELDS) =>
    FIELDS[group].map((spec) => ({
      ...spec,
      value: values[spec.name] ?? '',
      error: errors[spec.name] ?? '',
    }));
  return {
    fields: { log: fields('log'), columns: fields('columns'), settings: fields('settings') },
    timeUnits: [
      { value: '', label: 'From the header (hours for date-times)', selected: !values.timeUnit },
      ...TIME_UNITS.map((unit) => ({ value: unit, label: unit, selected: values.timeUnit === unit })),
    ],
    temperatureUnits: [
      { value: '', label: 'From the header, else °C', selected: !values.temperatureUnit },
      { value: 'C', label: '°C', selected: values.temperatureUnit === 'C' },
      { value: 'K', label: 'K', selected: values.temperatureUnit === 'K' },
    ],
    studies: [
      { value: '', label: 'None: assess the log only', selected: !values.studyId },
      ...studies.map((study) => ({
        value: String(study.id),
        label: `${study.title} · ${study.product} · ${study.attribute} (${study.unit})`,
        selected: values.studyId === String(study.id),
      })),
    ],
    latestValue: { value: values.latestValue ?? '', error: errors.latestValue ?? '' },
    errors,
    errorCount: Object.keys(errors).length,
  };
}

const estimateText = (estimate: Estimate | null, format: (value: number) => string): string => {
  if (estimate === null) return 'not predicted';
  const interval = estimate.interval
    ? ` (${format(estimate.interval[0])} to ${format(estimate.interval[1])})`
    : '';
  return `${format(estimate.estimate)}${interval}`;
};

/** The study part of the page: what the log cost the product in its own kinetics. */
export function impactView(impact: StudyImpact | null) {
  if (impact === null) return null;
  const unit = impact.timeUnit;
  const duration = (value: number) => `${formatSignificant(value, 3)} ${unit}`;
  const inUnit = (value: number) => `${formatSignificant(value, 4)} ${impact.source.unit}`;
  const confidence = `${Math.round(impact.confidence * 100)} %`;
  const rows = [
    { label: 'Storage temperature of the study', value: `${impact.storageTemperatureC} °C` },
    { label: 'Time the readings cover', value: duration(impact.loggedDuration) },
    {
      label: `Equivalent time at ${impact.storageTemperatureC} °C (${confidence} interval)`,
      value: estimateText(impact.equivalentDuration, duration),
    },
    {
      label: `Difference from the same time at ${impact.storageTemperatureC} °C`,
      value: `${estimateText(impact.extraDuration, duration)}: ${impact.extraDuration.estimate > 0 ? 'the log cost more than storage at the labelled temperature' : 'the log cost no more than storage at the labelled temperature'}`,
    },
    {
      label: `Predicted change of ${impact.source.attribute} over the log`,
      value: impact.predictedChangePercent
        ? `${estimateText(impact.predictedChangePercent, (v) => formatSignificant(v, 3))} % of the value at the start`
        : estimateText(impact.predictedChange, inUnit),
    },
  ];
  if (impact.margin) {
    rows.push(
      {
        label: `Margin to the limit (${inUnit(impact.limit ?? 0)}) before the log`,
        value: inUnit(impact.margin.before),
      },
      { label: 'Margin left after the log', value: estimateText(impact.margin.after, inUnit) },
    );
  }
  const extrapolated = [
    impact.extrapolation.belowC === null ? null : `down to ${impact.extrapolation.belowC} °C`,
    impact.extrapolation.aboveC === null ? null : `up to ${impact.extrapolation.aboveC} °C`,
  ].filter((text): text is string => text !== null);
  return {
    source: impact.source,
    sourceText: `Arrhenius fit of analysis ${impact.source.analysisRunId} of “${impact.source.studyTitle}” (engine ${impact.source.engineVersion}): Ea ${formatSignificant(impact.source.activationEnergyKJPerMol, 3)} kJ/mol over ${impact.source.fittedRangeC[0]}–${impact.source.fittedRangeC[1]} °C, ${impact.order === null ? 'no order named' : `order ${impact.order}`}.`,
    rows,
    extrapolation: extrapolated.length
      ? `The log reaches temperatures outside the fitted range (${extrapolated.join(', ')}): there the straight Arrhenius line is an assumption the study's data cannot check.`
      : '',
    notes: impact.notes,
  };
}
