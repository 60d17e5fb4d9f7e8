/**
 * The temperature-log assessment as one plain JSON document: what `mkt --json` prints, what the
 * assessment screen shows and what is stored, write-once, with each assessment.
 *
 * Times are elapsed `timeUnit`s since the first reading; when the log holds date-times, each time
 * also comes as an ISO 8601 instant (`…At`). Temperatures are °C. ΔH is in kJ/mol.
 *
 * Example: `temperatureLogDocument(assessTemperatureLog(readings), { timeUnit: 'h', startAt: null,
 * ... })` gives `{ mktC: 26.26…, minC: 20, maxC: 30, duration: 3, windows: [], ... }`.
 */
import { SECONDS_PER_TIME_UNIT, type TimeUnit } from '../units.ts';
import type {
  TemperatureExcursion,
  TemperatureLogAssessment,
  TemperatureLogGap,
  TemperatureWindow,
} from './temperature-log.ts';

export interface TemperatureLogSource {
  file: string;
  sheet: string;
  timeUnit: TimeUnit;
  startAt: Date | null;
  rangeC: { minC?: number; maxC?: number } | null;
}

type At = { startAt?: string; endAt?: string };

export interface TemperatureLogDocument {
  file: string;
  sheet: string;
  readings: number;
  timeUnit: TimeUnit;
  startAt: string | null;
  endAt: string | null;
  mktC: number;
  minC: number;
  maxC: number;
  meanC: number;
  duration: number;
  coveredDuration: number;
  weighting: 'equal' | 'by-duration';
  medianInterval: number;
  maxInterval: number;
  activationEnergyKJPerMol: number;
  gasConstant: number;
  range: { minC: number | null; maxC: number | null } | null;
  timeAbove: number | null;
  timeBelow: number | null;
  window: { length: number; step: number } | null;
  windows: (TemperatureWindow & At)[];
  warmestWindow: (TemperatureWindow & At) | null;
  excursions: (TemperatureExcursion & At & { peakAt?: string })[];
  gaps: (TemperatureLogGap & At)[];
  method: string;
}

/** Time units a date-time log may be measured in: fixed lengths only (not calendar months). */
export const DATETIME_LOG_TIME_UNITS: readonly TimeUnit[] = ['s', 'min', 'h', 'd', 'week'];

/** The one sentence that states how the figures were computed (shown and stored with them). */
export function temperatureLogMethod(assessment: TemperatureLogAssessment, timeUnit: TimeUnit): string {
  const weighting =
    assessment.weighting === 'equal'
      ? 'the readings are equally spaced, so each weighs 1/n (the plain formula)'
      : 'each reading stands for half the interval to each neighbour (half the median interval at the ends of the log and beside a gap)';
  return (
    `Mean kinetic temperature by Haynes' formula as given in USP <1160>, ΔH = ${assessment.activationEnergy / 1000} kJ/mol, ` +
    `R = ${assessment.gasConstant} J/(mol·K); ${weighting}. ` +
    `An interval longer than ${round(assessment.maxInterval)} ${timeUnit} is a gap: reported, not bridged. ` +
    'Time outside the range is the time covered by readings outside it.'
  );
}

function round(value: number): string {
  return String(Number(value.toPrecision(6)));
}

export function temperatureLogDocument(
  assessment: TemperatureLogAssessment,
  source: TemperatureLogSource,
): TemperatureLogDocument {
  const { startAt } = source;
  const instant = (time: number): string | undefined =>
    startAt === null
      ? undefined
      : new Date(startAt.getTime() + time * SECONDS_PER_TIME_UNIT[source.timeUnit] * 1000).toISOString();
  const at = <T extends { start: number; end: number }>(item: T): T & At =>
    startAt === null ? { ...item } : { ...item, startAt: instant(item.start), endAt: instant(item.end) };
  return {
    file: source.file,
    sheet: source.sheet,
    readings: assessment.readings,
    timeUnit: source.timeUnit,
    startAt: startAt === null ? null : startAt.toISOString(),
    endAt: startAt === null ? null : (instant(assessment.duration) ?? null),
    mktC: assessment.mktC,
    minC: assessment.minC,
    maxC: assessment.maxC,
    meanC: assessment.meanC,
    duration: assessment.duration,
    coveredDuration: assessment.coveredDuration,
    weighting: assessment.weighting,
    medianInterval: assessment.medianInterval,
    maxInterval: assessment.maxInterval,
    activationEnergyKJPerMol: assessment.activationEnergy / 1000,
    gasConstant: assessment.gasConstant,
    range: source.rangeC ? { minC: source.rangeC.minC ?? null, maxC: source.rangeC.maxC ?? null } : null,
    timeAbove: assessment.timeAbove,
    timeBelow: assessment.timeBelow,
    window:
      assessment.windowLength === null || assessment.windowStep === null
        ? null
        : { length: assessment.windowLength, step: assessment.windowStep },
    windows: assessment.windows.map(at),
    warmestWindow: assessment.warmestWindow ? at(assessment.warmestWindow) : null,
    excursions: assessment.excursions.map((excursion) => {
      const peakAt = instant(excursion.peakTime);
      return peakAt === undefined ? at(excursion) : { ...at(excursion), peakAt };
    }),
    gaps: assessment.gaps.map(at),
    method: temperatureLogMethod(assessment, source.timeUnit),
  };
}
