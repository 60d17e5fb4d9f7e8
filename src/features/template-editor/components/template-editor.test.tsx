import { fireEvent, screen, waitFor, within } from '@testing-library/react';
import { beforeAll, describe, expect, it } from 'vitest';
import { publishOutcomeSchema } from '../../../../shared/api/template-publication.ts';
import {
  type TemplateSourceInput,
  templateEditorResponseSchema,
  templatePreviewRequestSchema,
  templatePreviewResponseSchema,
  templateVersionResponseSchema,
  templateVersionSummarySchema,
} from '../../../../shared/api/templates.ts';
import { json, mockApi, refusal } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import { TemplateEditor } from './template-editor.tsx';

/** The preview waits for typing to pause (400 ms) before it asks the server. */
const AFTER_PREVIEW = { timeout: 3_000 };

const versionSummary = (id: number, versionNumber: number, published: boolean, note: string) =>
  templateVersionSummarySchema.parse({
    id,
    versionNumber,
    sha256: String(versionNumber).repeat(64),
    note,
    createdBy: 'Dr. Ana Ruiz',
    createdAt: `2026-02-0${versionNumber}T10:00:00.000Z`,
    published,
  });

const version1 = versionSummary(10, 1, false, 'Shipped default');
const version2 = versionSummary(20, 2, true, 'Letterhead names the stability unit');
const version3 = versionSummary(30, 3, false, 'Report number in the heading');

const source: TemplateSourceInput = {
  body: '<h1>Kinetics report</h1>\n{{> letterhead}}',
  partials: { letterhead: '<header>Stability unit</header>' },
  stylesheet: 'h1 { font-size: 18pt; }',
};

const editorAnswer = (versions: unknown[]) =>
  templateEditorResponseSchema.parse({
    template: {
      id: 2,
      name: 'Default report',
      publishedVersionId: 20,
      publishedVersionNumber: 2,
      usedForNewReports: true,
      versions,
    },
    sampleRuns: [{ id: 12, label: 'Analysis 12 · Atorvastatin 20 mg long-term' }],
    variables: [{ path: 'report.number', description: 'The report number', insert: '{{report.number}}' }],
    helpers: [{ name: 'each', usage: '{{#each study.batches}}', description: 'Repeats for each batch' }],
  });

/** A fake of the template API: the preview renders `{{report.number}}` and finds an unclosed block. */
function templateApi(save: () => Response) {
  const versions = [version2, version1];
  return mockApi([
    { path: '/api/admin/templates/2', respond: () => json(200, editorAnswer(versions)) },
    {
      path: '/api/admin/templates/2/publications',
      respond: () => json(200, { needsSecondAdmin: false, pending: [] }),
    },
    {
      path: '/api/admin/templates/2/versions/20',
      respond: () => json(200, templateVersionResponseSchema.parse({ version: version2, source })),
    },
    {
      method: 'POST',
      path: '/api/admin/templates/preview',
      respond: ({ body }) => {
        const draft = templatePreviewRequestSchema.parse(JSON.parse(String(body))).source;
        const unclosed = draft.body.includes('{{#each') && !draft.body.includes('{{/each}}');
        return json(
          200,
          templatePreviewResponseSchema.parse({
            html: unclosed
              ? null
              : `<html><body>${draft.body.replace('{{report.number}}', 'RL-2026-0005')}</body></html>`,
            problems: unclosed
              ? [
                  {
                    part: 'body',
                    line: 1,
                    column: 1,
                    message: 'each doesn\'t match: the block "each" is not closed.',
                  },
                ]
              : [],
            examples: { 'report.number': 'RL-2026-0005' },
            sample: 'Analysis 12',
          }),
        );
      },
    },
    {
      method: 'POST',
      path: '/api/admin/templates/2/versions',
      respond: () => {
        const answer = save();
        if (answer.ok) versions.unshift(version3);
        return answer;
      },
    },
    {
      method: 'POST',
      path: '/api/admin/templates/2/publish',
      respond: () =>
        json(
          200,
          publishOutcomeSchema.parse({
            status: 'published',
            publishedVersionId: 30,
            publishedVersionNumber: 3,
            previousVersionNumber: 2,
            rolledBack: false,
          }),
        ),
    },
  ]);
}

async function openEditor() {
  renderWithQueries(<TemplateEditor templateId={2} />);
  expect(screen.getByText('Loading the template…')).toBeDefined();
  await screen.findByRole('tab', { name: 'Main template' });
}

const previewFrame = () => screen.getByTitle('Report preview') as HTMLIFrameElement;

describe('the template editor', () => {
  // CodeMirror measures text through ranges; jsdom lays nothing out and has no such measures.
  beforeAll(() => {
    const noRects = () => Object.assign([], { item: () => null }) as unknown as DOMRectList;
    Range.prototype.getClientRects = noRects;
    Range.prototype.getBoundingClientRect = () => new DOMRect();
  });

  it('opens the published version, previews an edit, saves it as a new version and publishes it', async () => {
    const requests = templateApi(() => json(201, { version: version3 }));
    await openEditor();

    expect(screen.getAllByRole('tab').map((tab) => tab.textContent)).toContain('letterhead');
    expect(await screen.findByText('Preview up to date', {}, AFTER_PREVIEW)).toBeDefined();
    expect(previewFrame().getAttribute('srcdoc')).toContain('<h1>Kinetics report</h1>');
    expect(screen.getByText('Showing version 2.')).toBeDefined();
    expect(screen.getByText('e.g. RL-2026-0005')).toBeDefined();

    fireEvent.click(screen.getByRole('button', { name: 'Insert report.number' }));

    expect(screen.getByRole('tab', { name: /^Main template\s*\(changed\)$/ })).toBeDefined();
    expect(screen.getByText('Unsaved changes to version 2.')).toBeDefined();
    await waitFor(
      () => expect(previewFrame().getAttribute('srcdoc')).toContain('RL-2026-0005'),
      AFTER_PREVIEW,
    );

    fireEvent.change(screen.getByLabelText('What changed'), {
      target: { value: 'Report number in the heading' },
    });
    fireEvent.click(screen.getByRole('button', { name: 'Save as version 3' }));

    const saved = await screen.findByText(/^Saved as version 3 \(SHA-256 333333333333…\)/);
    expect(saved.getAttribute('role')).toBe('status');
    const editing = screen.getByRole('region', { name: 'Template source' });
    const publish = await within(editing).findByRole('button', { name: 'Publish version 3' });
    const versions = screen.getByRole('region', { name: 'Versions' });
    expect(within(versions).getByText('Report number in the heading')).toBeDefined();

    fireEvent.click(publish);

    // Publishing is change-controlled: a reason and a confirmation, checked before anything is sent.
    const confirm = within(editing).getByRole('form', { name: 'Publish version 3' });
    fireEvent.click(within(confirm).getByRole('button', { name: 'Confirm the publication' }));
    expect(within(confirm).getByText(/^Give the reason for this change/)).toBeDefined();
    expect(within(confirm).getByText('Confirm that new reports are to use this version.')).toBeDefined();
    const publishes = () => requests.filter((request) => request.url.pathname.endsWith('/publish'));
    expect(publishes()).toHaveLength(0);
    fireEvent.change(within(confirm).getByLabelText(/^Reason for the change/), {
      target: { value: 'Report number shown in the heading (change request CR-12)' },
    });
    fireEvent.click(within(confirm).getByLabelText('I confirm that new reports are to use version 3.'));
    fireEvent.click(within(confirm).getByRole('button', { name: 'Confirm the publication' }));

    expect(await screen.findByText(/^Version 3 is published\. New reports use it/)).toBeDefined();
    expect(publishes()).toHaveLength(1);
    expect(JSON.parse(String(publishes()[0]!.body))).toEqual({
      versionId: 30,
      reason: 'Report number shown in the heading (change request CR-12)',
      confirmed: true,
    });
  });

  it('lists the problems of a draft and of a refused save, each with its part and line', async () => {
    templateApi(() =>
      refusal(
        422,
        "Not saved: the template has 1 problem. First: Main template, line 1, column 1: each doesn't match.",
        [
          {
            part: 'body',
            line: 1,
            column: 1,
            message: 'each doesn\'t match: the block "each" is not closed.',
            field: 'body',
          },
        ],
      ),
    );
    await openEditor();
    await screen.findByText('Preview up to date', {}, AFTER_PREVIEW);
    fireEvent.click(screen.getByRole('tab', { name: /Helpers/ }));

    fireEvent.click(screen.getByRole('button', { name: 'Insert helper each' }));

    const draftProblems = await screen.findByRole('alert', { name: 'Problems in the draft' }, AFTER_PREVIEW);
    expect(draftProblems.textContent).toContain('Main template, line 1, column 1:');
    expect(
      screen.getByRole('tab', { name: /^Main template\s*\(changed\)\s*\(has problems\)$/ }),
    ).toBeDefined();
    expect(screen.getByText(/The draft has problems \(listed under the editor\)/)).toBeDefined();

    fireEvent.change(screen.getByLabelText('What changed'), { target: { value: 'Batches listed' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save as version 3' }));

    const notSaved = await screen.findByRole('alert', { name: 'Not saved' });
    expect(within(notSaved).getByRole('button').textContent).toBe(
      'Main template, line 1, column 1: each doesn\'t match: the block "each" is not closed.',
    );
    expect(screen.getByText(/^Not saved: the template has 1 problem\./)).toBeDefined();
    expect(screen.queryByRole('button', { name: 'Publish version 3' })).toBeNull();
  });

  it('says why when the template cannot be opened', async () => {
    mockApi([
      {
        path: '/api/admin/templates/2',
        respond: () => refusal(404, 'There is no report template 2 in your organisation.'),
      },
    ]);
    renderWithQueries(<TemplateEditor templateId={2} />);

    expect((await screen.findByRole('alert')).textContent).toBe(
      'There is no report template 2 in your organisation.',
    );
  });
});
