// Reader and intake together on workbooks built here with exceljs: an invented product
// ("Veltrazine", fictional batches VZ-…) with a two-row merged header and sampling dates.
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { columnMappingSchema } from '../../../../shared/intake/column-mapping.ts';
import { seriesFromGrid } from '../../../../shared/intake/series-from-grid.ts';
import { readCsv } from './read-csv.ts';
import { readWorkbook } from './read-workbook.ts';

describe('workbook to series', () => {
  it('reads a merged two-row header, a batch merged over its rows and date cells', async () => {
    const workbook = new ExcelJS.Workbook();
    const sheet = workbook.addWorksheet('Long term');
    sheet.getCell('A1').value = 'Batch';
    sheet.getCell('B1').value = 'Pulled';
    sheet.getCell('C1').value = 'Results';
    sheet.getCell('C2').value = 'Assay';
    sheet.getCell('D2').value = 'Water';
    sheet.mergeCells('A1:A2');
    sheet.mergeCells('B1:B2');
    sheet.mergeCells('C1:D1');
    const pulls: [string, number][] = [
      ['2024-01-15', 100.3],
      ['2024-04-15', 99.6],
      ['2024-07-15', 98.8],
      ['2025-01-15', 97.4],
    ];
    pulls.forEach(([date, assay], index) => {
      sheet.getCell(`B${index + 3}`).value = new Date(`${date}T00:00:00Z`);
      sheet.getCell(`C${index + 3}`).value = assay;
      sheet.getCell(`D${index + 3}`).value = 2.1 + index * 0.1;
    });
    sheet.getCell('A3').value = 'VZ-004';
    sheet.mergeCells('A3:A6');
    const sheets = await readWorkbook(new Uint8Array(await workbook.xlsx.writeBuffer()));
    const result = seriesFromGrid(
      sheets,
      columnMappingSchema.parse({
        headerRow: 2,
        timeColumn: 'Pulled',
        timeFormat: 'datetime',
        timeUnit: 'month',
        valueColumn: 'Assay',
        seriesColumn: 'Batch',
      }),
    );
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.series).toHaveLength(1);
    expect(result.series[0]?.id).toBe('VZ-004');
    // Calendar months from 15 Jan 2024 (common practice for pull points).
    expect(result.series[0]?.observations.map((o) => [o.time, o.value])).toEqual([
      [0, 100.3],
      [3, 99.6],
      [6, 98.8],
      [12, 97.4],
    ]);
    expect(result.series[0]?.observations[3]?.source?.cell).toBe("'Long term'!C6");
  });

  it('gives the same series from a semicolon CSV with decimal commas as from its workbook', async () => {
    const csv = readCsv('Lot;Monat;Gehalt\nVZ-005;0;100,1\nVZ-005;3;99,4\nVZ-005;6;98,6\n', 'Sheet1');
    const workbook = new ExcelJS.Workbook();
    const sheet = workbook.addWorksheet('Sheet1');
    for (const row of [
      ['Lot', 'Monat', 'Gehalt'],
      ['VZ-005', 0, 100.1],
      ['VZ-005', 3, 99.4],
      ['VZ-005', 6, 98.6],
    ]) {
      sheet.addRow(row);
    }
    const xlsx = await readWorkbook(new Uint8Array(await workbook.xlsx.writeBuffer()));
    const mapping = columnMappingSchema.parse({
      timeColumn: 'Monat',
      timeUnit: 'month',
      valueColumn: 'Gehalt',
      seriesColumn: 'Lot',
    });
    const fromCsv = seriesFromGrid(csv, mapping);
    const fromXlsx = seriesFromGrid(xlsx, mapping);
    expect(fromCsv.ok && fromCsv.series).toEqual(fromXlsx.ok && fromXlsx.series);
  });
});
