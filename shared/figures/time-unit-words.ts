/**
 * The engine states times in "time units" because it does not know what the dataset's time axis
 * counts (shared/kinetics/stability/confidence-limit-crossing.ts: "meets the acceptance limit at
 * 27.95 time units (the dataset's unit of time)"). A page or report that knows the unit says it:
 * "at 27.95 months". Pure.
 *
 * Example: inTimeUnit("… at 27.95 time units (the dataset's unit of time).", 'month')
 * gives "… at 27.95 months."; with an empty unit the text is returned unchanged.
 */
export function inTimeUnit(text: string, timeUnit: string): string {
  const unit = timeUnit.trim();
  if (unit === '') return text;
  const plural = /s$/i.test(unit) || unit.length <= 2 ? unit : `${unit}s`;
  return text
    .replace(/ time units \(the dataset['’]s unit of time\)/g, ` ${plural}`)
    .replace(/ time units\b/g, ` ${plural}`);
}
