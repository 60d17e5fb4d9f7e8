import { describe, expect, it } from 'vitest';
import { temperatureLogFromGrid } from '../../shared/intake/temperature-log-from-grid.ts';
import { assessTemperatureLog } from '../../shared/kinetics/temperature/temperature-log.ts';
import { readCsv } from '../features/intake/index.ts';
import { demoTemperatureLogCsv } from './demo-temperature-log.ts';

describe('the demo temperature log', () => {
  it('is the same file on every seed, with one rise above 25 °C and one logger outage', () => {
    expect(demoTemperatureLogCsv().equals(demoTemperatureLogCsv())).toBe(true);
    const intake = temperatureLogFromGrid(readCsv(demoTemperatureLogCsv(), 'demo'), {
      headerRow: 1,
      timeColumn: 'Logged at',
      timeFormat: 'auto',
      temperatureColumn: 'Probe 1',
    });
    if (!intake.ok) throw new Error(intake.problems.map((p) => p.text).join('\n'));
    expect(intake.timeUnit).toBe('h');
    // 4 days × 96 readings, less the 8 readings of the 2-hour outage.
    expect(intake.readings).toHaveLength(384 - 8);
    const assessment = assessTemperatureLog(intake.readings, { rangeC: { maxC: 25 } });
    expect(assessment.gaps).toEqual([{ start: 55.75, end: 58, duration: 2.25 }]);
    expect(assessment.excursions).toHaveLength(1);
    expect(assessment.excursions[0]?.peakC).toBeGreaterThan(32);
  });
});
