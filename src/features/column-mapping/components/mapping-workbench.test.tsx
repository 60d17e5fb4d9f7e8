import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import {
  importRequestSchema,
  importResponseSchema,
  type PreviewCell,
  previewResponseSchema,
} from '../../../../shared/api/uploads.ts';
import { json, mockApi, refusal, setCsrfToken } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { MappingWorkbench } from './mapping-workbench.tsx';

const text = (value: string): PreviewCell => ({ text: value, kind: 'text' });
const number = (value: number): PreviewCell => ({ text: String(value), kind: 'number' });

/** A long-term stability export: two batches at 25 °C, assay in % of label claim. */
const sheet = {
  name: 'Long-term',
  rowCount: 7,
  columnCount: 4,
  rows: [
    [text('Batch'), text('Temperature (°C)'), text('Month'), text('Assay (%)')],
    [text('B001'), number(25), number(0), number(100.1)],
    [text('B001'), number(25), number(3), number(99.2)],
    [text('B001'), number(25), number(6), number(98.4)],
    [text('B002'), number(25), number(0), number(99.8)],
    [text('B002'), number(25), number(3), number(99.0)],
    [text('B002'), number(25), number(6), number(98.1)],
  ],
  merges: [],
  headerGuess: 1,
};

const upload = {
  id: 41,
  studyId: 7,
  fileName: 'long-term.xlsx',
  format: 'xlsx',
  sizeBytes: 9_812,
  sha256: 'a'.repeat(64),
};

const previewWithoutCheck = previewResponseSchema.parse({
  upload,
  sheets: [sheet],
  savedMappings: [],
  check: null,
});
const previewChecked = previewResponseSchema.parse({
  upload,
  sheets: [sheet],
  savedMappings: [],
  check: { ok: true, problems: [], warnings: [], replicateRows: [], seriesCount: 2, pointCount: 6 },
});

const imported = importResponseSchema.parse({
  datasetId: 93,
  sha256: 'b'.repeat(64),
  pointCount: 6,
  series: [
    {
      id: 'B001 @ 25 °C',
      batch: 'B001',
      temperatureC: 25,
      points: 3,
      distinctTimes: 3,
      firstTime: 0,
      lastTime: 6,
      timeUnit: 'month',
      valueUnit: '%',
    },
    {
      id: 'B002 @ 25 °C',
      batch: 'B002',
      temperatureC: 25,
      points: 3,
      distinctTimes: 3,
      firstTime: 0,
      lastTime: 6,
      timeUnit: 'month',
      valueUnit: '%',
    },
  ],
  warnings: [],
  savedMappingId: null,
});

const previewRoute = {
  path: '/api/uploads/41/preview',
  respond: ({ url }: { url: URL }) =>
    json(200, url.searchParams.has('mapping') ? previewChecked : previewWithoutCheck),
};

/** The whole-sheet check waits for the form to settle (350 ms) before it asks the server. */
const AFTER_CHECK = { timeout: 3_000 };

/** Every live region (aria-live, or a role that is one) that holds `element`, itself included. */
function liveRegionsHolding(element: Element): Element[] {
  const live = '[aria-live]:not([aria-live="off"]), [role="status"], [role="alert"], [role="log"]';
  const regions: Element[] = [];
  for (let node: Element | null = element; node; node = node.parentElement) {
    if (node.matches(live)) regions.push(node);
  }
  return regions;
}

function renderWorkbench() {
  return renderWithQueries(<MappingWorkbench uploadId="41" studyId="7" valueUnit="%" />);
}

describe('the mapping workbench', () => {
  it('guesses the mapping from the headers, checks the whole sheet and imports it', async () => {
    setCsrfToken('token-from-the-page');
    const requests = mockApi([
      previewRoute,
      { method: 'POST', path: '/api/uploads/41/import', respond: () => json(201, imported) },
    ]);
    renderWorkbench();

    expect(screen.getByText('Reading the file…')).toBeDefined();
    const status = await screen.findByText(
      /The whole sheet reads cleanly: 6 points in 2 series/,
      {},
      AFTER_CHECK,
    );
    expect(liveRegionsHolding(status).map((region) => region.getAttribute('role'))).toEqual(['status']);
    expect((screen.getByLabelText('Time column') as HTMLSelectElement).value).toBe('Month');
    expect((screen.getByLabelText('Value column') as HTMLSelectElement).value).toBe('Assay (%)');
    expect((screen.getByLabelText('Unit of time') as HTMLSelectElement).value).toBe('month');
    const table = screen.getByRole('table', { name: 'First rows of sheet Long-term' });
    expect(within(table).getByText('header')).toBeDefined();

    fireEvent.click(screen.getByRole('button', { name: 'Import as dataset' }));

    expect(await screen.findByRole('heading', { name: 'Dataset #93 stored' })).toBeDefined();
    expect(screen.getByRole('cell', { name: 'B002 @ 25 °C' })).toBeDefined();
    expect(screen.getByRole('link', { name: 'Back to the study' }).getAttribute('href')).toBe('/studies/7');
    const post = requests.find((request) => request.method === 'POST');
    expect(post?.headers.get('x-csrf-token')).toBe('token-from-the-page');
    expect(post?.headers.get('content-type')).toBe('application/json');
    const sent = importRequestSchema.parse(JSON.parse(String(post?.body)));
    expect(sent.mapping).toMatchObject({
      sheet: 'Long-term',
      timeColumn: 'Month',
      valueColumn: 'Assay (%)',
      seriesColumn: 'Batch',
      temperatureColumn: 'Temperature (°C)',
    });
  });

  it('after the import, focus moves to the summary heading and a live region announces what was stored (issue 17 §1)', async () => {
    mockApi([
      previewRoute,
      { method: 'POST', path: '/api/uploads/41/import', respond: () => json(201, imported) },
    ]);
    renderWorkbench();
    await screen.findByText(/The whole sheet reads cleanly/, {}, AFTER_CHECK);
    const button = screen.getByRole('button', { name: 'Import as dataset' });
    button.focus();
    fireEvent.click(button);

    const heading = await screen.findByRole('heading', { name: 'Dataset #93 stored' });
    expect(document.activeElement).toBe(heading);
    expect(heading.getAttribute('tabindex')).toBe('-1');
    const live = screen
      .getAllByRole('status')
      .find((region) => region.closest('section[aria-labelledby="import-summary"]'));
    expect(live?.getAttribute('aria-live')).toBe('polite');
    // Empty when it enters the page, filled a moment later: that change is what is announced.
    await waitFor(() => expect(live?.textContent).toMatch(/^Dataset #93 stored: \d+ points in 2 series\./));
  });

  it('says each sentence of the whole-sheet check in exactly one live region, which stays in the page (accessibility review, 4.1.3)', async () => {
    mockApi([previewRoute]);
    renderWorkbench();
    const timeColumn = await screen.findByLabelText('Time column');
    const checking = screen.getByText('Checking the whole sheet…');
    const [region] = liveRegionsHolding(checking);
    expect(liveRegionsHolding(checking)).toHaveLength(1);

    const sentence = await screen.findByText(
      /^The whole sheet reads cleanly: 6 points in 2 series\.$/,
      {},
      AFTER_CHECK,
    );
    expect(liveRegionsHolding(sentence)).toEqual([region]);
    expect(region?.getAttribute('role')).toBe('status');
    expect(region?.textContent).toBe('The whole sheet reads cleanly: 6 points in 2 series.');
    // No live region inside the region either: its text is said once.
    expect(
      region?.querySelectorAll('[aria-live], [role="status"], [role="alert"], [role="log"]'),
    ).toHaveLength(0);

    fireEvent.change(timeColumn, { target: { value: '' } });
    const hint = screen.getByText(/^Choose at least the time column/);
    expect(liveRegionsHolding(hint)).toEqual([region]);
    expect(region?.isConnected).toBe(true);
  });

  it('shows the field error beside the field when a required column is unchosen', async () => {
    mockApi([previewRoute]);
    renderWorkbench();
    const timeColumn = await screen.findByLabelText('Time column');

    fireEvent.change(timeColumn, { target: { value: '' } });

    expect(screen.getByText('Choose the time column.').id).toBe('map-timeColumn-error');
    expect(timeColumn.getAttribute('aria-invalid')).toBe('true');
    expect(screen.getByText(/Choose at least the time column/)).toBeDefined();
  });

  it('two roles on one column name that problem, not the missing columns (issue 13 §8)', async () => {
    mockApi([previewRoute]);
    renderWorkbench();
    const valueColumn = await screen.findByLabelText('Value column');

    fireEvent.change(valueColumn, { target: { value: 'Month' } });

    expect(
      screen.getByText(
        /^Column “Month” is already chosen as the time column; a column can have one role only\.$/,
      ).id,
    ).toBe('map-valueColumn-error');
    expect(screen.queryByText(/Choose at least the time column/)).toBeNull();
    expect(
      screen.getByText(
        'Column “Month” is chosen as both the time column and the value column; give it one role and choose another column for the rest. The whole sheet is then checked.',
      ),
    ).toBeDefined();
  });

  it('lists every problem of a refused import with its cell, and marks the cell', async () => {
    mockApi([
      previewRoute,
      {
        method: 'POST',
        path: '/api/uploads/41/import',
        respond: () =>
          refusal(
            422,
            'The file has 1 problem with this mapping; nothing was stored. Fix the cells listed and import again.',
            [
              {
                where: "'Long-term'!D4",
                message: 'The value is not a number.',
                text: "'Long-term'!D4: The value is not a number.",
              },
            ],
          ),
      },
    ]);
    renderWorkbench();
    await screen.findByText(/The whole sheet reads cleanly/, {}, AFTER_CHECK);

    fireEvent.click(screen.getByRole('button', { name: 'Import as dataset' }));

    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toContain('The file has 1 problem with this mapping; nothing was stored.');
    expect(within(alert).getByText("'Long-term'!D4:")).toBeDefined();
    expect(within(alert).getByText('The value is not a number.')).toBeDefined();
    expect(screen.getByTitle('The value is not a number.').textContent).toBe('98.4');
  });

  it('with notes from the check (issue 12 §6) it does not say "reads cleanly", lists them and outlines the noted cell, and still imports', async () => {
    const notes = [
      {
        where: "'Long-term'!C2:C7",
        message:
          'the time column C ("Month") has only 3 different values (0, 3, 6) with 4 results at each value of a series on average: that is how a storage condition, batch or replicate column looks, not the time of each pull.',
      },
      {
        where: "'Long-term'!D3",
        message:
          'value -0.2 is negative, but an amount in "%" cannot be: check the cell; it is imported as written',
      },
    ].map((note) => ({ ...note, text: `${note.where}: ${note.message}` }));
    const previewWithNotes = previewResponseSchema.parse({
      ...previewChecked,
      check: { ...previewChecked.check, warnings: notes },
    });
    mockApi([
      {
        path: '/api/uploads/41/preview',
        respond: ({ url }: { url: URL }) =>
          json(200, url.searchParams.has('mapping') ? previewWithNotes : previewWithoutCheck),
      },
      { method: 'POST', path: '/api/uploads/41/import', respond: () => json(201, imported) },
    ]);
    renderWorkbench();

    const status = await screen.findByText(
      /The whole sheet can be read: 6 points in 2 series/,
      {},
      AFTER_CHECK,
    );
    expect(status.textContent).toContain('Read the 2 notes below before you import');
    expect(screen.queryByText(/reads cleanly/)).toBeNull();
    const list = screen.getByText(/^Notes \(not errors/).closest('[role="status"]') as HTMLElement;
    expect(within(list).getByText("'Long-term'!C2:C7:")).toBeDefined();
    expect(within(list).getByText(notes[1]!.message)).toBeDefined();
    // The note's cell (D3 holds 99.2 in this preview) carries the note as its title.
    expect(screen.getByTitle(notes[1]!.message).textContent).toBe('99.2');

    fireEvent.click(screen.getByRole('button', { name: 'Import as dataset' }));
    expect(await screen.findByRole('heading', { name: 'Dataset #93 stored' })).toBeDefined();
  });

  it('says why when the file cannot be previewed', async () => {
    mockApi([
      {
        path: '/api/uploads/41/preview',
        respond: () => refusal(404, 'There is no upload 41 in your organisation.'),
      },
    ]);
    renderWorkbench();

    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toBe(
      'The file could not be previewed: There is no upload 41 in your organisation.',
    );
  });
});
