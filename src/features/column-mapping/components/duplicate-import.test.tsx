import { fireEvent, screen } from '@testing-library/react';
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

/** The mapping island when the server refuses a repeated import (409) until a reason is given. */

const text = (value: string): PreviewCell => ({ text: value, kind: 'text' });
const number = (value: number): PreviewCell => ({ text: String(value), kind: 'number' });

const sheet = {
  name: 'Long-term',
  rowCount: 5,
  columnCount: 3,
  rows: [
    [text('Batch'), text('Month'), text('Assay (%)')],
    [text('B001'), number(0), number(100.1)],
    [text('B001'), number(3), number(99.2)],
    [text('B001'), number(6), number(98.4)],
    [text('B001'), number(9), number(97.5)],
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
const check = { ok: true, problems: [], warnings: [], replicateRows: [], seriesCount: 1, pointCount: 4 };
const imported = importResponseSchema.parse({
  datasetId: 94,
  sha256: 'b'.repeat(64),
  pointCount: 4,
  series: [
    {
      id: 'B001',
      batch: 'B001',
      points: 4,
      distinctTimes: 4,
      firstTime: 0,
      lastTime: 9,
      timeUnit: 'month',
      valueUnit: '%',
    },
  ],
  warnings: [],
  savedMappingId: null,
});

describe('a repeated import in the mapping workbench', () => {
  it('shows the refusal naming the existing dataset, asks for a reason and sends it', async () => {
    setCsrfToken('token-from-the-page');
    const message =
      'This upload was already imported with this mapping as dataset #93 (2026-12-03 17:00 UTC, by Test analyst); importing it again would only make a second identical dataset. Use dataset #93, or give a reason to import it again.';
    const requests = mockApi([
      {
        path: '/api/uploads/41/preview',
        respond: ({ url }) =>
          json(
            200,
            previewResponseSchema.parse({
              upload,
              sheets: [sheet],
              savedMappings: [],
              check: url.searchParams.has('mapping') ? check : null,
            }),
          ),
      },
      {
        method: 'POST',
        path: '/api/uploads/41/import',
        respond: ({ body }) =>
          JSON.parse(String(body)).duplicateReason
            ? json(201, imported)
            : refusal(409, message, { existingDatasetId: 93 }),
      },
    ]);
    renderWithQueries(<MappingWorkbench uploadId="41" studyId="7" valueUnit="%" />);
    await screen.findByText(/The whole sheet reads cleanly/, {}, { timeout: 3_000 });
    fireEvent.click(screen.getByRole('button', { name: 'Import as dataset' }));
    expect(await screen.findByText(message)).toBeDefined();

    // No reason: nothing is sent, and the field says why.
    const again = screen.getByRole('button', { name: 'Import again with this reason' });
    fireEvent.click(again);
    expect(screen.getByText(/Give the reason; it is kept in the audit trail/)).toBeDefined();
    expect(requests.filter((request) => request.method === 'POST')).toHaveLength(1);

    fireEvent.change(screen.getByLabelText('Reason for importing it again'), {
      target: { value: 'Second copy for a method transfer (invented).' },
    });
    fireEvent.click(again);
    expect(await screen.findByRole('heading', { name: 'Dataset #94 stored' })).toBeDefined();
    const posts = requests.filter((request) => request.method === 'POST');
    expect(posts).toHaveLength(2);
    expect(importRequestSchema.parse(JSON.parse(String(posts[1]!.body))).duplicateReason).toBe(
      'Second copy for a method transfer (invented).',
    );
  });
});
