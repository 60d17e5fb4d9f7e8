/**
 * Reads the unit a column header states, so an analyst need not type it twice.
 *
 * Lab sheets usually put the unit in the header: "Time (h)", "Month", "Assay [% label claim]",
 * "Temperature / °C". The unit is the text in the last pair of round or square brackets, or after
 * a " / " (the quantity/unit form of ISO 80000-1 §7.1, "T / K"); for time, a header that is itself
 * a unit word ("Months", "Weeks") counts too.
 *
 * Never throws; returns null when the header states no unit it can read.
 *
 * Example: `timeUnitFromHeader('Time (hrs)')` is 'h'; `valueUnitFromHeader('Assay [% label claim]')`
 * is '% label claim'; `temperatureUnitFromHeader('T / K')` is 'K'.
 */
import {
  type TemperatureUnit,
  type TimeUnit,
  tryParseTemperatureUnit,
  tryParseTimeUnit,
} from '../kinetics/units.ts';

/** The unit part of a header: last bracketed text, or the text after " / ". */
export function unitTextOfHeader(header: string): string | null {
  const bracketed = /[([]([^()[\]]+)[)\]]\s*$/.exec(header.trim());
  if (bracketed?.[1]) return bracketed[1].trim();
  const slash = / \/ (.+)$/.exec(header.trim());
  if (slash?.[1]) return slash[1].trim();
  return null;
}

export function timeUnitFromHeader(header: string): TimeUnit | null {
  const unitText = unitTextOfHeader(header);
  return (unitText === null ? null : tryParseTimeUnit(unitText)) ?? tryParseTimeUnit(header);
}

export function valueUnitFromHeader(header: string): string | null {
  return unitTextOfHeader(header);
}

export function temperatureUnitFromHeader(header: string): TemperatureUnit | null {
  const unitText = unitTextOfHeader(header);
  if (unitText !== null) return tryParseTemperatureUnit(unitText);
  return /°C\b/.test(header) ? 'C' : null;
}

/** A unit's spelling reduced for comparison: lower case, no spaces, dots or "of"; "LC" is label claim. */
function unitKey(unit: string): string {
  return unit
    .toLowerCase()
    .replace(/\blabel\s*claim\b/g, 'lc')
    .replace(/\bl\.\s*c\.?/g, 'lc')
    .replace(/\bof\b/g, '')
    .replace(/[\s.]/g, '');
}

/**
 * The value unit a mapping starts with: the study's own label when the header names the same
 * unit in another spelling ("% LC", "% label claim" for a study in "% of label claim"), so the
 * dataset, the analysis and the report show one label for one unit; the header's unit when it
 * names another one (then the difference is the analyst's to see); the study's when the header
 * has none.
 *
 * Example: `valueUnitForStudy('Assay (% LC)', '% of label claim')` is '% of label claim';
 * `valueUnitForStudy('Conc. (mg/mL)', '% of label claim')` is 'mg/mL'.
 */
export function valueUnitForStudy(header: string, studyUnit: string): string {
  const fromHeader = valueUnitFromHeader(header);
  if (fromHeader === null) return studyUnit;
  return unitKey(fromHeader) === unitKey(studyUnit) ? studyUnit : fromHeader;
}
