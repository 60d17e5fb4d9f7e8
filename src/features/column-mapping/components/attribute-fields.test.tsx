// The mapping screen for a study of several attributes (issue 15 §1). Data invented: batches B001
// and B002 of an invented product, measured for assay, a degradation product and water.
import { fireEvent, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import {
  importRequestSchema,
  importResponseSchema,
  type PreviewCell,
  previewResponseSchema,
} from '../../../../shared/api/uploads.ts';
import { json, mockApi } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { parseAttributeChoices } from '../attribute-draft.ts';
import { checkDraft, guessDraft } from '../mapping-draft.ts';
import { MappingWorkbench } from './mapping-workbench.tsx';

const text = (value: string): PreviewCell => ({ text: value, kind: 'text' });
const number = (value: number): PreviewCell => ({ text: String(value), kind: 'number' });

const sheet = {
  name: 'Stability',
  rowCount: 3,
  columnCount: 5,
  rows: [
    [text('Batch'), text('Month'), text('Assay (%)'), text('Impurity B (%)'), text('Water (%)')],
    [text('B001'), number(0), number(100.1), text('<LOQ'), number(2.1)],
    [text('B001'), number(3), number(99.2), number(0.06), number(2.3)],
  ],
  merges: [],
  headerGuess: 1,
};

const ATTRIBUTES = [
  { name: 'Assay', unit: '% of label claim' },
  { name: 'Impurity B', unit: '% area' },
  { name: 'Water', unit: '% w/w' },
];

const upload = {
  id: 41,
  studyId: 7,
  fileName: 'stability.xlsx',
  format: 'xlsx',
  sizeBytes: 9_812,
  sha256: 'a'.repeat(64),
};
const preview = previewResponseSchema.parse({ upload, sheets: [sheet], savedMappings: [], check: null });
const checked = previewResponseSchema.parse({
  ...preview,
  check: { ok: true, problems: [], warnings: [], replicateRows: [], seriesCount: 3, pointCount: 6 },
});
const imported = importResponseSchema.parse({
  datasetId: 94,
  sha256: 'b'.repeat(64),
  pointCount: 6,
  series: [
    {
      id: 'Assay · B001',
      attribute: 'Assay',
      batch: 'B001',
      points: 2,
      distinctTimes: 2,
      firstTime: 0,
      lastTime: 3,
      timeUnit: 'month',
      valueUnit: '% of label claim',
    },
  ],
  warnings: [],
  savedMappingId: null,
});

const AFTER_CHECK = { timeout: 3_000 };

function routes() {
  return mockApi([
    {
      path: '/api/uploads/41/preview',
      respond: ({ url }: { url: URL }) => json(200, url.searchParams.has('mapping') ? checked : preview),
    },
    { method: 'POST', path: '/api/uploads/41/import', respond: () => json(201, imported) },
  ]);
}

describe('the mapping screen for a study of several attributes', () => {
  it('matches each value column to an attribute by its header, and imports one column per attribute', async () => {
    const requests = routes();
    renderWithQueries(
      <MappingWorkbench uploadId="41" studyId="7" valueUnit="% of label claim" attributes={ATTRIBUTES} />,
    );
    await screen.findByText(/The whole sheet reads cleanly: 6 points in 3 series/, {}, AFTER_CHECK);
    expect(
      (screen.getByRole('radio', { name: /One column per attribute/ }) as HTMLInputElement).checked,
    ).toBe(true);
    expect(
      (screen.getByLabelText('Attribute of the value column (C · Assay (%))') as HTMLSelectElement).value,
    ).toBe('Assay');
    expect((screen.getByLabelText('Value column 2') as HTMLSelectElement).value).toBe('Impurity B (%)');
    expect((screen.getByLabelText('Attribute of value column 2') as HTMLSelectElement).value).toBe(
      'Impurity B',
    );
    expect((screen.getByLabelText('Unit of value column 2') as HTMLInputElement).value).toBe('% area');
    expect((screen.getByLabelText('Value column 3') as HTMLSelectElement).value).toBe('Water (%)');

    fireEvent.click(screen.getByRole('button', { name: 'Remove value column 3' }));
    expect(screen.queryByLabelText('Value column 3')).toBeNull();
    fireEvent.click(screen.getByRole('button', { name: 'Import as dataset' }));
    expect(await screen.findByRole('heading', { name: 'Dataset #94 stored' })).toBeDefined();
    const post = requests.find((request) => request.method === 'POST');
    const sent = importRequestSchema.parse(JSON.parse(String(post?.body)));
    expect(sent.mapping).toMatchObject({
      valueColumn: 'Assay (%)',
      valueAttribute: 'Assay',
      moreValueColumns: [{ column: 'Impurity B (%)', attribute: 'Impurity B', unit: '% area' }],
    });
    expect(sent.mapping.attributeColumn).toBeUndefined();
  });

  it('offers the attribute-name layout, and ties its errors to the fields', async () => {
    routes();
    renderWithQueries(<MappingWorkbench uploadId="41" studyId="7" valueUnit="%" attributes={ATTRIBUTES} />);
    fireEvent.click(await screen.findByRole('radio', { name: /A column naming the attribute/ }));
    const attributeColumn = screen.getByLabelText('Attribute column');
    expect(screen.queryByLabelText('Value column 2')).toBeNull();

    fireEvent.change(attributeColumn, { target: { value: 'Batch' } });
    const error = screen.getByText(
      'Column “Batch” is already chosen as the batch column; a column can have one role only.',
    );
    expect(error.id).toBe('map-attributeColumn-error');
    expect(attributeColumn.getAttribute('aria-invalid')).toBe('true');
    expect(attributeColumn.getAttribute('aria-describedby')).toBe('map-attributeColumn-error');

    fireEvent.change(attributeColumn, { target: { value: '' } });
    expect(screen.getByText('Choose the column that names the attribute of each row.').id).toBe(
      'map-attributeColumn-error',
    );
  });

  it('names a further column left unchosen and an attribute given twice, under their fields', async () => {
    routes();
    renderWithQueries(<MappingWorkbench uploadId="41" studyId="7" valueUnit="%" attributes={ATTRIBUTES} />);
    const attribute = await screen.findByLabelText('Attribute of value column 2');
    fireEvent.change(attribute, { target: { value: 'Assay' } });
    expect(
      screen.getByText(
        'The attribute "Assay" is already given to another value column; each attribute has one column.',
      ).id,
    ).toBe('map-moreValueColumns-0-attribute-error');
    expect(attribute.getAttribute('aria-describedby')).toBe('map-moreValueColumns-0-attribute-error');

    fireEvent.change(screen.getByLabelText('Value column 3'), { target: { value: '' } });
    expect(screen.getByText('Choose the column, or remove this row.').id).toBe(
      'map-moreValueColumns-1-column-error',
    );
    const form = screen.getByRole('group', { name: 'Attributes in this sheet' });
    expect(within(form).getAllByRole('combobox').length).toBeGreaterThan(4);
  });

  it('shows no attribute fields for a study of one attribute, and its mapping names none', async () => {
    routes();
    renderWithQueries(
      <MappingWorkbench
        uploadId="41"
        studyId="7"
        valueUnit="%"
        attributes={[{ name: 'Assay', unit: '%' }]}
      />,
    );
    await screen.findByLabelText('Value column');
    expect(screen.queryByRole('group', { name: 'Attributes in this sheet' })).toBeNull();
    const draft = guessDraft(sheet, '%', [{ name: 'Assay', unit: '%' }]);
    const result = checkDraft(draft);
    expect(result.ok && Object.keys(result.mapping).some((key) => /ttribute|moreValue/.test(key))).toBe(
      false,
    );
  });
});

describe('parseAttributeChoices', () => {
  it('reads the page’s JSON and ignores anything malformed', () => {
    expect(parseAttributeChoices(JSON.stringify(ATTRIBUTES))).toEqual(ATTRIBUTES);
    expect(parseAttributeChoices(undefined)).toEqual([]);
    expect(parseAttributeChoices('not json')).toEqual([]);
    expect(parseAttributeChoices('[{"name": 3}]')).toEqual([]);
  });
});
