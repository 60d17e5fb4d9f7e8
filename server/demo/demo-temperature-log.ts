/**
 * The demo temperature log: an invented data-logger export from a consignment of the demo
 * product to a regional depot — four days every 15 minutes near 20 °C, a five-hour rise to
 * 33 °C on the second afternoon (the truck parked in the sun, invented), and a 2-hour logger
 * outage on the third day — assessed against the demo study once at seed time, so each demo role
 * finds a temperature-log assessment on first sign-in.
 *
 * Deterministic: no random numbers, the same file on every seed.
 */

import { readCsv } from '../features/intake/index.ts';
import { createTemperatureLogAssessment } from '../features/temperature-logs/index.ts';
import type { SessionUser } from '../platform/auth/roles.ts';
import type { Database } from '../platform/db/client.ts';

const START = Date.UTC(2026, 8, 7, 6, 0);
const STEP_MINUTES = 15;
const READINGS = 4 * 24 * 4;

/** The logger file as a CSV export: "Logged at (UTC)", "Probe 1 (°C)". */
export function demoTemperatureLogCsv(): Buffer {
  const lines = ['Logged at (UTC),Probe 1 (°C),Logger'];
  for (let i = 0; i < READINGS; i += 1) {
    const hours = (i * STEP_MINUTES) / 60;
    if (hours >= 56 && hours < 58) continue; // the outage
    const daily = 20 + 1.8 * Math.sin((2 * Math.PI * (hours - 8)) / 24);
    const spike = hours >= 31 && hours < 36 ? 13 * Math.sin((Math.PI * (hours - 31)) / 5) : 0;
    const at = new Date(START + i * STEP_MINUTES * 60_000).toISOString().slice(0, 16).replace('T', ' ');
    lines.push(`${at},${(daily + Math.max(spike, 0)).toFixed(1)},BF-LOG-0311`);
  }
  return Buffer.from(`${lines.join('\n')}\n`, 'utf8');
}

/** Assesses the demo log against the demo study, as the demo analyst. */
export async function seedDemoTemperatureLog(
  db: Database,
  analyst: SessionUser,
  studyId: number,
): Promise<number> {
  const created = await createTemperatureLogAssessment(
    db,
    analyst,
    {
      title: 'Consignment QT-C-0907 to the regional depot (demo)',
      file: { fileName: 'consignment-qt-c-0907.csv', mediaType: 'text/csv', bytes: demoTemperatureLogCsv() },
      mapping: {
        headerRow: 1,
        timeColumn: 'Logged at',
        timeFormat: 'auto',
        temperatureColumn: 'Probe 1',
      },
      settings: {
        activationEnergyKJPerMol: 83.144,
        rangeMaxC: 25,
        window: { value: 24, unit: 'h' },
      },
      studyId,
      latestValue: 99.1,
    },
    { source: 'demo seed' },
    async (bytes, _format, fileName) => readCsv(bytes, fileName.replace(/\.csv$/, '')),
  );
  return created.id;
}
