import { describe, expect, it } from 'vitest';
import {
  formatReportNumber,
  isKnownTimeZone,
  knownTimeZones,
  organisationSettingsFormSchema,
  organisationSettingsFromForm,
  parseReportNumberFormat,
  reportNumberFrame,
  settingsFieldErrors,
} from './settings.ts';

describe('report number formats', () => {
  it('formats the year and a zero-padded running number, never cutting a longer number', () => {
    expect(formatReportNumber('RL-{YYYY}-{NNNN}', { year: '2026', sequence: 7 })).toBe('RL-2026-0007');
    expect(formatReportNumber('QC.{YY}.{NNN}-S', { year: '2026', sequence: 12345 })).toBe('QC.26.12345-S');
    expect(formatReportNumber('{NNNNNN}', { year: '2026', sequence: 42 })).toBe('000042');
  });

  it('splits a format around its running number for a year', () => {
    expect(reportNumberFrame('A{YY}-{NNNN}-{YYYY}', '2031')).toEqual({
      prefix: 'A31-',
      suffix: '-2031',
      width: 4,
    });
  });

  it('refuses a format without exactly one running number, with unknown tokens or unsafe characters', () => {
    const problems = (format: string) => {
      const parsed = parseReportNumberFormat(format);
      return parsed.ok ? [] : parsed.problems;
    };
    expect(problems('RL-{YYYY}')).toEqual([expect.stringContaining('needs a running number')]);
    expect(problems('{NN}{NNN}')).toEqual(['The format can hold only one running number.']);
    expect(problems('RL {NNNN}')[0]).toContain('characters a report number cannot hold');
    expect(problems('RL-{NNNNNNNNN}')).toEqual([expect.stringContaining('at most 8 digits')]);
    expect(problems('')).toHaveLength(1);
    expect(() => formatReportNumber('RL', { year: '2026', sequence: 1 })).toThrow(TypeError);
  });
});

describe('the organisation settings form', () => {
  const base = {
    signatureMeanings: 'Reviewed\r\nApproved',
    defaultConfidenceLevel: '0.99',
    defaultTimeUnit: 'week',
    defaultValueUnit: 'mg/mL',
    timeZone: 'America/Chicago',
    reportNumberFormat: 'RL-{YYYY}-{NNNN}',
  };

  it('reads preset rows from flat fields, drops blank rows, keeps the row index in errors', () => {
    const good = organisationSettingsFormSchema.parse(
      organisationSettingsFromForm({
        ...base,
        'preset-0-attribute': '',
        'preset-0-direction': 'either',
        'preset-1-attribute': 'Assay',
        'preset-1-unit': '%',
        'preset-1-direction': 'decreasing',
        'preset-1-lowerLimit': '90,5',
      }),
    );
    expect(good.defaultConfidenceLevel).toBe(0.99);
    expect(good.signatureMeanings).toEqual(['Reviewed', 'Approved']);
    expect(good.acceptancePresets).toEqual([
      { attribute: 'Assay', unit: '%', direction: 'decreasing', lowerLimit: 90.5, upperLimit: null },
    ]);
    const bad = organisationSettingsFormSchema.safeParse(
      organisationSettingsFromForm({ ...base, 'preset-3-attribute': 'Water', 'preset-3-direction': 'up' }),
    );
    expect(bad.success).toBe(false);
    const errors = settingsFieldErrors(bad.error!);
    expect(Object.keys(errors).sort()).toEqual(['acceptancePresets.3.direction', 'acceptancePresets.3.unit']);
  });

  it('refuses duplicate meanings and duplicate presets', () => {
    const parsed = organisationSettingsFormSchema.safeParse(
      organisationSettingsFromForm({
        ...base,
        signatureMeanings: 'Approved\napproved',
        'preset-0-attribute': 'Assay',
        'preset-0-unit': '%',
        'preset-0-direction': 'decreasing',
        'preset-0-lowerLimit': '95',
        'preset-1-attribute': 'assay',
        'preset-1-unit': '%',
        'preset-1-direction': 'decreasing',
        'preset-1-lowerLimit': '90',
      }),
    );
    const errors = settingsFieldErrors(parsed.error!);
    expect(errors.signatureMeanings).toBe('Each meaning can be listed only once.');
    expect(errors['acceptancePresets.1.attribute']).toContain('listed already');
  });

  it('knows UTC and the IANA zones of the runtime (Intl.supportedValuesOf), current names included', () => {
    expect(knownTimeZones()).toContain('UTC');
    // IANA tzdata names Asia/Kolkata and Europe/Kyiv; CLDR's canonical list may hold the older spellings.
    for (const zone of [
      'UTC',
      'Europe/Berlin',
      'Asia/Kolkata',
      'Asia/Calcutta',
      'Europe/Kyiv',
      'America/Argentina/Buenos_Aires',
    ])
      expect(isKnownTimeZone(zone)).toBe(true);
    for (const zone of ['Mars/Olympus_Mons', 'EST', 'utc', 'Europe/Berlin ', ''])
      expect(isKnownTimeZone(zone)).toBe(false);
  });
});
