import { compensatedSum } from '../numeric/compensated-sum.ts';
import { KineticsError } from '../numeric/kinetics-error.ts';
import { KELVIN_AT_ZERO_CELSIUS } from '../units.ts';
import { meanKineticTemperature } from './mean-kinetic-temperature.ts';
import {
  USP_MEAN_KINETIC_TEMPERATURE_ACTIVATION_ENERGY,
  USP_MEAN_KINETIC_TEMPERATURE_GAS_CONSTANT,
} from './physical-constants.ts';

/** One logger reading: elapsed time (any one unit for the whole log) and temperature in °C. */
export interface TemperatureReading {
  time: number;
  temperatureC: number;
}

export interface TemperatureLogOptions {
  /** Heat of activation ΔH in J/mol; default 83 144 (USP <1160>). */
  activationEnergy?: number;
  /** The labelled storage range in °C; either side may be left open. */
  rangeC?: { minC?: number; maxC?: number };
  /**
   * Longest interval between two readings that is still one stretch of logging, in the log's time
   * unit. A longer interval is a gap: reported, never bridged. Default: twice the median interval.
   */
  maxInterval?: number;
  /** Length of the rolling windows, in the log's time unit; none when omitted. */
  windowLength?: number;
  /** Distance between the starts of successive windows; default a thirtieth of the window. */
  windowStep?: number;
}

/** A stretch of time without readings, longer than the longest allowed interval. */
export interface TemperatureLogGap {
  /** Time of the last reading before the gap. */
  start: number;
  /** Time of the first reading after the gap. */
  end: number;
  duration: number;
}

/** Consecutive readings outside the labelled range on the same side, with the time they cover. */
export interface TemperatureExcursion {
  side: 'above' | 'below';
  /** Start of the time the first reading outside covers. */
  start: number;
  /** End of the time the last reading outside covers. */
  end: number;
  duration: number;
  /** The warmest reading of an excursion above the range, the coldest of one below. */
  peakC: number;
  peakTime: number;
  readings: number;
}

/** Mean kinetic temperature over one rolling window, and the plain extremes inside it. */
export interface TemperatureWindow {
  start: number;
  end: number;
  mktC: number;
  minC: number;
  maxC: number;
  meanC: number;
  /** Time inside the window that readings cover (less than the window where a gap falls in it). */
  coveredDuration: number;
}

export interface TemperatureLogAssessment {
  readings: number;
  /** Time from the first to the last reading. */
  duration: number;
  /** Time the readings stand for under the weighting rule (gaps excluded). */
  coveredDuration: number;
  /** 'equal' when every interval is the same, so each reading weighs 1/n (the plain formula). */
  weighting: 'equal' | 'by-duration';
  medianInterval: number;
  maxInterval: number;
  mktC: number;
  minC: number;
  maxC: number;
  /** Duration-weighted arithmetic mean. */
  meanC: number;
  activationEnergy: number;
  gasConstant: number;
  gaps: TemperatureLogGap[];
  /** Null when no labelled range was given. */
  timeAbove: number | null;
  timeBelow: number | null;
  excursions: TemperatureExcursion[];
  windowLength: number | null;
  windowStep: number | null;
  windows: TemperatureWindow[];
  /** The window with the highest MKT; null without windows (or when the log is shorter than one). */
  warmestWindow: TemperatureWindow | null;
  /** The time each reading stands for, in reading order (for `excursionImpact`). */
  coverage: number[];
}

/** The time one reading stands for: [from, to), around its own time. */
interface Coverage {
  from: number;
  to: number;
  temperatureC: number;
}

function median(values: readonly number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1
    ? (sorted[middle] as number)
    : ((sorted[middle - 1] as number) + (sorted[middle] as number)) / 2;
}

function checkReadings(readings: readonly TemperatureReading[]): void {
  if (readings.length < 2) {
    throw new KineticsError('too-few-points', 'A temperature log needs at least two readings.', {
      n: readings.length,
    });
  }
  for (let index = 0; index < readings.length; index += 1) {
    const reading = readings[index] as TemperatureReading;
    if (!Number.isFinite(reading.time) || !Number.isFinite(reading.temperatureC)) {
      throw new KineticsError('invalid-input', 'Every reading needs a finite time and temperature.', {
        index,
      });
    }
    if (reading.temperatureC <= -KELVIN_AT_ZERO_CELSIUS) {
      throw new KineticsError('invalid-input', 'A temperature is at or below absolute zero.', { index });
    }
    const previous = readings[index - 1];
    if (previous && !(reading.time > previous.time)) {
      throw new KineticsError(
        'invalid-input',
        'Reading times must increase strictly: sort the log by time and remove repeated times.',
        { index },
      );
    }
  }
}

function positiveOption(name: string, value: number | undefined): void {
  if (value !== undefined && !(Number.isFinite(value) && value > 0)) {
    throw new KineticsError('invalid-input', `${name} must be a positive number.`, { [name]: value });
  }
}

/** MKT in °C of periods with these temperatures and durations (`meanKineticTemperature`). */
function periodMkt(
  temperaturesC: readonly number[],
  durations: readonly number[],
  activationEnergy: number,
): number {
  return meanKineticTemperature(temperaturesC, { durations, activationEnergy }).meanKineticTemperatureC;
}

/**
 * Splits the log into the time each reading stands for.
 *
 * Rule (stated in docs/methods.md#temperature-logs): each reading covers half the interval to each
 * neighbour. The first and last readings, and a reading beside a gap, cover half the median
 * interval on their open side, as if the logger had gone on at its usual pace; a gap itself is
 * covered by no reading. With equal intervals every reading therefore covers exactly one interval,
 * each weighs 1/n, and the result is the plain formula of USP <1160>.
 */
function coverages(
  readings: readonly TemperatureReading[],
  medianInterval: number,
  maxInterval: number,
): { cover: Coverage[]; gaps: TemperatureLogGap[] } {
  const gaps: TemperatureLogGap[] = [];
  const half = medianInterval / 2;
  const cover = readings.map((reading, index) => {
    const previous = readings[index - 1];
    const next = readings[index + 1];
    const before = previous ? reading.time - previous.time : null;
    const after = next ? next.time - reading.time : null;
    if (next && after !== null && after > maxInterval) {
      gaps.push({ start: reading.time, end: next.time, duration: after });
    }
    const from = before === null || before > maxInterval ? reading.time - half : reading.time - before / 2;
    const to = after === null || after > maxInterval ? reading.time + half : reading.time + after / 2;
    return { from, to, temperatureC: reading.temperatureC };
  });
  return { cover, gaps };
}

function excursionsOf(cover: readonly Coverage[], minC: number, maxC: number): TemperatureExcursion[] {
  const found: TemperatureExcursion[] = [];
  let current: TemperatureExcursion | null = null;
  for (const piece of cover) {
    const side = piece.temperatureC > maxC ? 'above' : piece.temperatureC < minC ? 'below' : null;
    // A gap ends an excursion: the time inside a gap is not known to be outside the range.
    const joins = current !== null && current.side === side && piece.from === current.end;
    if (side === null) {
      current = null;
      continue;
    }
    if (!joins || current === null) {
      current = {
        side,
        start: piece.from,
        end: piece.to,
        duration: 0,
        peakC: piece.temperatureC,
        peakTime: (piece.from + piece.to) / 2,
        readings: 0,
      };
      found.push(current);
    }
    current.end = piece.to;
    current.duration = current.end - current.start;
    current.readings += 1;
    const hotter = side === 'above' ? piece.temperatureC > current.peakC : piece.temperatureC < current.peakC;
    if (hotter || current.readings === 1) {
      current.peakC = piece.temperatureC;
      current.peakTime = (piece.from + piece.to) / 2;
    }
  }
  return found;
}

/** Smallest and largest of many numbers (a loop: spreading 10⁵ arguments overflows the stack). */
function extremes(values: readonly number[]): { min: number; max: number } {
  let min = Number.POSITIVE_INFINITY;
  let max = Number.NEGATIVE_INFINITY;
  for (const value of values) {
    if (value < min) min = value;
    if (value > max) max = value;
  }
  return { min, max };
}

/** Index of the first piece that ends after `time` (pieces are in time order). */
function firstEndingAfter(cover: readonly Coverage[], time: number): number {
  let low = 0;
  let high = cover.length;
  while (low < high) {
    const middle = (low + high) >>> 1;
    if ((cover[middle] as Coverage).to <= time) low = middle + 1;
    else high = middle;
  }
  return low;
}

function windowOver(
  activationEnergy: number,
  cover: readonly Coverage[],
  start: number,
  end: number,
): TemperatureWindow | null {
  const weights: number[] = [];
  const temperatures: number[] = [];
  for (let index = firstEndingAfter(cover, start); index < cover.length; index += 1) {
    const piece = cover[index] as Coverage;
    if (piece.from >= end) break;
    const overlap = Math.min(piece.to, end) - Math.max(piece.from, start);
    if (overlap > 0) {
      weights.push(overlap);
      temperatures.push(piece.temperatureC);
    }
  }
  if (weights.length === 0) return null;
  const covered = compensatedSum(weights);
  const { min, max } = extremes(temperatures);
  return {
    start,
    end,
    mktC: periodMkt(temperatures, weights, activationEnergy),
    minC: min,
    maxC: max,
    meanC: compensatedSum(temperatures.map((t, i) => t * (weights[i] as number))) / covered,
    coveredDuration: covered,
  };
}

/**
 * Assesses a temperature log (a warehouse or shipment data-logger file): mean kinetic temperature
 * over the whole log and over rolling windows, extremes, time outside the labelled range, each
 * excursion, and the gaps in the log.
 *
 * Why: a whole-log MKT dilutes a short spike, so excursions are judged over rolling windows as
 * USP <1079.2> recommends, and a gap is reported rather than bridged (nothing is known inside it).
 *
 * Formula: with c = ΔH/R and wᵢ the time reading i covers (see `coverages`),
 * MKT = c / (−ln(Σ wᵢ·exp(−c/Tᵢ) / Σ wᵢ)), Tᵢ in kelvin, computed by `meanKineticTemperature` (J. D. Haynes, J. Pharm. Sci. 60 (1971)
 * 927; USP <1160>, ΔH = 83.144 kJ/mol and R = 8.3144 J/(mol·K) by default). A window clips each
 * reading's covered time to the window and uses the same formula. Time outside the range is the
 * covered time of readings outside it; an excursion is a run of such readings on one side, broken
 * by a reading inside the range or by a gap.
 *
 * Throws `KineticsError` for fewer than two readings, times that do not increase, non-finite
 * values, temperatures at or below absolute zero, non-positive options or a range whose minimum
 * is above its maximum.
 *
 * Example: readings at 0, 1, 2, 3 h of 20, 30, 20, 30 °C → equal weighting, MKT 26.260 °C.
 */
export function assessTemperatureLog(
  readings: readonly TemperatureReading[],
  options: TemperatureLogOptions = {},
): TemperatureLogAssessment {
  checkReadings(readings);
  const activationEnergy = options.activationEnergy ?? USP_MEAN_KINETIC_TEMPERATURE_ACTIVATION_ENERGY;
  const gasConstant = USP_MEAN_KINETIC_TEMPERATURE_GAS_CONSTANT;
  positiveOption('activationEnergy', activationEnergy);
  positiveOption('maxInterval', options.maxInterval);
  positiveOption('windowLength', options.windowLength);
  positiveOption('windowStep', options.windowStep);
  const minC = options.rangeC?.minC ?? Number.NEGATIVE_INFINITY;
  const maxC = options.rangeC?.maxC ?? Number.POSITIVE_INFINITY;
  if (minC > maxC) {
    throw new KineticsError('invalid-input', 'The labelled range has its minimum above its maximum.', {
      minC,
      maxC,
    });
  }
  const intervals = readings
    .slice(1)
    .map((reading, i) => reading.time - (readings[i] as TemperatureReading).time);
  const medianInterval = median(intervals);
  const maxInterval = options.maxInterval ?? 2 * medianInterval;
  const { cover, gaps } = coverages(readings, medianInterval, maxInterval);
  const weights = cover.map((piece) => piece.to - piece.from);
  const coveredDuration = compensatedSum(weights);
  const first = readings[0] as TemperatureReading;
  const last = readings[readings.length - 1] as TemperatureReading;
  const equal = intervals.every((interval) => interval === intervals[0]);
  const temperatures = readings.map((reading) => reading.temperatureC);
  const { min: lowestC, max: highestC } = extremes(temperatures);
  const hasRange = options.rangeC?.minC !== undefined || options.rangeC?.maxC !== undefined;
  const excursions = hasRange ? excursionsOf(cover, minC, maxC) : [];
  const sideTime = (side: 'above' | 'below') =>
    hasRange ? compensatedSum(excursions.filter((e) => e.side === side).map((e) => e.duration)) : null;

  const windows: TemperatureWindow[] = [];
  const windowLength = options.windowLength ?? null;
  const windowStep = windowLength === null ? null : (options.windowStep ?? windowLength / 30);
  const logStart = (cover[0] as Coverage).from;
  const logEnd = (cover[cover.length - 1] as Coverage).to;
  if (windowLength !== null && windowStep !== null && logEnd - logStart >= windowLength) {
    const count = Math.floor((logEnd - logStart - windowLength) / windowStep + 1e-9);
    const starts = Array.from({ length: count + 1 }, (_, i) => logStart + i * windowStep);
    // The last window ends with the log, so its end is always assessed.
    if (logStart + count * windowStep + windowLength < logEnd) starts.push(logEnd - windowLength);
    for (const start of starts) {
      const window = windowOver(activationEnergy, cover, start, start + windowLength);
      if (window) windows.push(window);
    }
  }
  const warmestWindow = windows.reduce<TemperatureWindow | null>(
    (warmest, window) => (warmest === null || window.mktC > warmest.mktC ? window : warmest),
    null,
  );

  return {
    readings: readings.length,
    duration: last.time - first.time,
    coveredDuration,
    weighting: equal ? 'equal' : 'by-duration',
    medianInterval,
    maxInterval,
    mktC: periodMkt(temperatures, equal ? weights.map(() => 1) : weights, activationEnergy),
    minC: lowestC,
    maxC: highestC,
    meanC: compensatedSum(temperatures.map((t, i) => t * (weights[i] as number))) / coveredDuration,
    activationEnergy,
    gasConstant,
    gaps,
    timeAbove: sideTime('above'),
    timeBelow: sideTime('below'),
    excursions,
    windowLength,
    windowStep,
    windows,
    warmestWindow,
    coverage: weights,
  };
}
