/**
 * The temperature-log assessment as plain text, for the `mkt` command without `--json` and for
 * people reading a stored assessment outside the app: the figures, then each excursion, gap and
 * the warmest window, then the method and the caution.
 *
 * Example: `temperatureLogText(document)` starts "Temperature log: log.csv (sheet log), 97 readings".
 */
import type { TemperatureLogDocument } from './temperature-log-document.ts';

/** Six significant digits: enough for a temperature log, never a false appearance of precision. */
function figure(value: number): string {
  return String(Number(value.toPrecision(6)));
}

function celsius(value: number): string {
  return `${value.toFixed(2)} °C`;
}

export const TEMPERATURE_LOG_CAUTION =
  'These figures support, and do not replace, qualified judgement, applicable guidance (USP <1160>, USP <1079.2>, ICH Q1A(R2)) and the laboratory’s own approved procedures for excursions.';

export function temperatureLogText(document: TemperatureLogDocument): string {
  const unit = document.timeUnit;
  const when = (time: number, at: string | undefined) =>
    at ? `${at} (${figure(time)} ${unit})` : `${figure(time)} ${unit}`;
  const lines: string[] = [
    `Temperature log: ${document.file} (sheet ${document.sheet}), ${document.readings} readings`,
    document.startAt
      ? `From ${document.startAt} to ${document.endAt}`
      : `Over ${figure(document.duration)} ${unit}`,
    '',
    `Mean kinetic temperature (whole log): ${celsius(document.mktC)}`,
    `Minimum ${celsius(document.minC)}, maximum ${celsius(document.maxC)}, time-weighted mean ${celsius(document.meanC)}`,
    `Duration ${figure(document.duration)} ${unit}; covered by readings ${figure(document.coveredDuration)} ${unit}; median interval ${figure(document.medianInterval)} ${unit}`,
  ];
  if (document.range) {
    const low = document.range.minC === null ? 'no lower limit' : `from ${celsius(document.range.minC)}`;
    const high = document.range.maxC === null ? 'no upper limit' : `to ${celsius(document.range.maxC)}`;
    lines.push(
      `Labelled range ${low} ${high}: ${figure(document.timeAbove ?? 0)} ${unit} above, ${figure(document.timeBelow ?? 0)} ${unit} below`,
    );
  } else {
    lines.push('No labelled range given: time outside it and excursions are not assessed.');
  }
  lines.push('', `Excursions: ${document.excursions.length === 0 ? 'none' : document.excursions.length}`);
  for (const excursion of document.excursions) {
    lines.push(
      `  ${excursion.side} the range from ${when(excursion.start, excursion.startAt)} for ${figure(excursion.duration)} ${unit}, peak ${celsius(excursion.peakC)} at ${when(excursion.peakTime, excursion.peakAt)}`,
    );
  }
  lines.push(`Gaps in the log (not bridged): ${document.gaps.length === 0 ? 'none' : document.gaps.length}`);
  for (const gap of document.gaps) {
    lines.push(`  no readings from ${when(gap.start, gap.startAt)} for ${figure(gap.duration)} ${unit}`);
  }
  if (document.window) {
    lines.push(
      '',
      document.warmestWindow
        ? `Rolling windows of ${figure(document.window.length)} ${unit} (${document.windows.length}, every ${figure(document.window.step)} ${unit}): highest MKT ${celsius(document.warmestWindow.mktC)} from ${when(document.warmestWindow.start, document.warmestWindow.startAt)}`
        : `Rolling windows of ${figure(document.window.length)} ${unit}: none, the log is shorter than one window; only the whole-log MKT applies.`,
    );
  }
  lines.push('', `Method: ${document.method}`, '', TEMPERATURE_LOG_CAUTION, '');
  return lines.join('\n');
}
