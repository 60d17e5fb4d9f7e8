import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useRef, useState } from 'react';
import { partLabel, type TemplateSourceInput } from '../../../../shared/api/templates.ts';
import { tabFromKey } from '../../../lib/tablist-keys.ts';
import { useTemplateEditor } from '../api/get-template-editor.ts';
import { useTemplateVersion } from '../api/get-template-version.ts';
import { useTemplatePreview } from '../api/preview-template.ts';
import { usePublishTemplateVersion } from '../api/publish-template-version.ts';
import { refusalProblems } from '../api/refusal-problems.ts';
import { useSaveTemplateVersion } from '../api/save-template-version.ts';
import { templateKeys } from '../api/template-keys.ts';
import { changedParts, draftParts, readPart, sameSource, writePart } from '../draft.ts';
import { CodeEditor, type CodeEditorHandle } from './code-editor.tsx';
import { NewPartialForm } from './new-partial-form.tsx';
import { PendingPublicationsPanel } from './pending-publications-panel.tsx';
import { PreviewPane } from './preview-pane.tsx';
import { ProblemList } from './problem-list.tsx';
import { PublishConfirmForm } from './publish-confirm-form.tsx';
import { ReferencePanel } from './reference-panel.tsx';
import { VersionsPanel } from './versions-panel.tsx';

/**
 * The template editor: the parts of one template in tabs (main, partials, stylesheet), a side
 * panel of variables and helpers, the live preview rendered by the server, the problems with
 * line and column (also marked in the editor's gutter), saving the draft as a new version and the
 * versions with publish, rollback and compare.
 */
export function TemplateEditor({ templateId }: { templateId: number }) {
  const queryClient = useQueryClient();
  const editor = useTemplateEditor(templateId);
  const [baseVersionId, setBaseVersionId] = useState<number | null>(null);
  const [loading, setLoading] = useState<number | null>(null);
  const [draft, setDraft] = useState<TemplateSourceInput | null>(null);
  const [generation, setGeneration] = useState(0);
  const [part, setPart] = useState('body');
  const [sampleRunId, setSampleRunId] = useState<number | null | undefined>(undefined);
  const [note, setNote] = useState('');
  const [message, setMessage] = useState<string | null>(null);
  const [lastGoodHtml, setLastGoodHtml] = useState<string | null>(null);
  /** The version whose publication (or rollback) waits for its reason and confirmation. */
  const [pendingPublish, setPendingPublish] = useState<{
    versionId: number;
    from: 'editor' | 'versions';
  } | null>(null);
  const handle = useRef<CodeEditorHandle | null>(null);
  const save = useSaveTemplateVersion(templateId);
  const publish = usePublishTemplateVersion(templateId);

  const template = editor.data?.template;
  useEffect(() => {
    if (!template || baseVersionId !== null) return;
    const start = template.publishedVersionId ?? template.versions[0]?.id ?? null;
    setBaseVersionId(start);
    setLoading(start);
  }, [template, baseVersionId]);
  useEffect(() => {
    if (editor.data && sampleRunId === undefined) setSampleRunId(editor.data.sampleRuns[0]?.id ?? null);
  }, [editor.data, sampleRunId]);

  const base = useTemplateVersion(templateId, baseVersionId);
  useEffect(() => {
    if (loading === null || base.data?.version.id !== loading) return;
    setDraft(base.data.source);
    setGeneration((value) => value + 1);
    setLoading(null);
  }, [base.data, loading]);

  const { preview, waiting } = useTemplatePreview(draft, sampleRunId ?? null);
  useEffect(() => {
    if (preview.data?.html) setLastGoodHtml(preview.data.html);
  }, [preview.data]);

  const problems = useMemo(() => preview.data?.problems ?? [], [preview.data]);
  const partProblems = useMemo(
    () =>
      problems
        .filter((problem) => problem.part === part && problem.line !== null)
        .map((problem) => ({ line: problem.line!, column: problem.column, message: problem.message })),
    [problems, part],
  );

  if (editor.isError)
    return (
      <p role="alert" className="text-alert">
        {editor.error.message}
      </p>
    );
  if (!editor.data || !template || !draft || !base.data)
    return <p className="text-sm text-ink-muted">Loading the template…</p>;

  const baseSource = base.data.source;
  const dirty = !sameSource(draft, baseSource);
  const changed = changedParts(draft, baseSource);
  const parts = draftParts(draft);
  const saveProblems = refusalProblems(save.error);
  const publishProblems = refusalProblems(publish.error);
  const nextNumber = (template.versions[0]?.versionNumber ?? 0) + 1;

  const openVersion = (versionId: number) => {
    if (dirty && !window.confirm('Discard the unsaved changes and open this version?')) return;
    setBaseVersionId(versionId);
    setLoading(versionId);
    setMessage(null);
  };
  const onSave = (event: React.FormEvent) => {
    event.preventDefault();
    setMessage(null);
    publish.reset();
    save.mutate(
      { source: draft, note },
      {
        onSuccess: ({ version }) => {
          queryClient.setQueryData(templateKeys.version(templateId, version.id), { version, source: draft });
          setBaseVersionId(version.id);
          setNote('');
          setMessage(
            `Saved as version ${version.versionNumber} (SHA-256 ${version.sha256.slice(0, 12)}…). New reports do not use it until it is published.`,
          );
        },
      },
    );
  };
  const onPublish = (versionId: number, from: 'editor' | 'versions') => {
    setMessage(null);
    save.reset();
    publish.reset();
    setPendingPublish({ versionId, from });
  };
  const pendingVersion = template.versions.find((version) => version.id === pendingPublish?.versionId);
  const onConfirmPublish = (request: { versionId: number; reason: string; confirmed: true }) => {
    publish.mutate(request, {
      onSuccess: (result) => {
        setPendingPublish(null);
        if (result.status === 'pending') {
          setMessage(
            `${result.pending.rollback ? 'Roll back' : 'Publication'} of version ${result.pending.versionNumber} proposed: it waits for another admin's approval. New reports keep the published version until then.`,
          );
          return;
        }
        setMessage(
          result.rolledBack
            ? `Rolled back: version ${result.publishedVersionNumber} is published again (was ${result.previousVersionNumber}). New reports use it; earlier reports keep their version.`
            : `Version ${result.publishedVersionNumber} is published. New reports use it; earlier reports keep the version they were made with.`,
        );
      },
    });
  };
  const confirmForm = pendingVersion && (
    <PublishConfirmForm
      key={pendingVersion.id}
      versionId={pendingVersion.id}
      versionNumber={pendingVersion.versionNumber}
      rollback={
        template.publishedVersionNumber !== null &&
        pendingVersion.versionNumber < template.publishedVersionNumber
      }
      publishing={publish.isPending}
      onConfirm={onConfirmPublish}
      onCancel={() => setPendingPublish(null)}
    />
  );
  const savedUnpublished = template.versions.find(
    (version) => version.id === baseVersionId && !version.published,
  );

  return (
    <div className="relative left-1/2 w-[96vw] max-w-[1680px] -translate-x-1/2">
      {/* One column below xl, never wider than the screen (reflow at 320 px and at 200 % text). */}
      <div className="grid grid-cols-[minmax(0,1fr)] gap-4 xl:grid-cols-[270px_minmax(0,1fr)_minmax(0,1fr)]">
        <div className="h-[680px] min-w-0">
          <ReferencePanel
            variables={editor.data.variables}
            helpers={editor.data.helpers}
            examples={preview.data?.examples ?? {}}
            onInsert={(text) => handle.current?.insert(text)}
          />
        </div>

        <section aria-label="Template source" className="flex min-w-0 flex-col gap-3">
          <div>
            <div className="flex flex-wrap items-end gap-1">
              <div role="tablist" aria-label="Template parts" className="flex flex-wrap items-end gap-1">
                {parts.map((key, index) => (
                  <button
                    key={key}
                    type="button"
                    role="tab"
                    aria-selected={key === part}
                    tabIndex={key === part ? 0 : -1}
                    onClick={() => setPart(key)}
                    onKeyDown={(event) => {
                      const next = tabFromKey(event, index, parts.length);
                      if (next !== null) setPart(parts[next]!);
                    }}
                    className={`rounded-t-sm border border-b-0 px-3 py-1.5 text-sm ${
                      key === part
                        ? 'border-rule bg-white font-semibold'
                        : 'border-transparent text-ink-muted hover:text-ink'
                    }`}
                  >
                    {partLabel(key).replace('Partial: ', '')}
                    {changed.has(key) && (
                      <span title="changed" className="ml-1 text-ledger">
                        <span aria-hidden="true">●</span>
                        <span className="sr-only"> (changed)</span>
                      </span>
                    )}
                    {problems.some((problem) => problem.part === key) && (
                      <span className="ml-1 text-alert">
                        <span aria-hidden="true">!</span>
                        <span className="sr-only"> (has problems)</span>
                      </span>
                    )}
                  </button>
                ))}
              </div>
              <NewPartialForm
                existing={Object.keys(draft.partials)}
                onAdd={(name) => {
                  setDraft(writePart(draft, `partial "${name}"`, ''));
                  setPart(`partial "${name}"`);
                }}
              />
            </div>
            <CodeEditor
              part={part}
              text={readPart(draft, part)}
              problems={partProblems}
              generation={generation}
              label={`${partLabel(part)} source`}
              handle={handle}
              onChange={(changedPart, text) =>
                setDraft((current) => (current ? writePart(current, changedPart, text) : current))
              }
            />
          </div>
          <ProblemList problems={problems} heading="Problems in the draft" onShow={setPart} />

          <form
            onSubmit={onSave}
            className="flex flex-wrap items-end gap-2 rounded-sm border border-rule bg-white p-3 text-sm"
          >
            <label className="flex min-w-64 flex-1 flex-col">
              <span className="font-semibold">What changed</span>
              <input
                value={note}
                onChange={(event) => setNote(event.target.value)}
                required
                maxLength={500}
                placeholder="e.g. Letterhead names the stability unit"
                className="rounded-sm border border-rule px-2 py-1"
              />
            </label>
            <button
              type="submit"
              disabled={!dirty || save.isPending}
              className="rounded-sm bg-ledger px-3 py-1.5 font-semibold text-white disabled:opacity-50"
            >
              {save.isPending ? 'Saving…' : `Save as version ${nextNumber}`}
            </button>
            {savedUnpublished && !dirty && (
              <button
                type="button"
                disabled={publish.isPending}
                onClick={() => onPublish(savedUnpublished.id, 'editor')}
                className="rounded-sm border border-ledger px-3 py-1.5 font-semibold text-ledger disabled:opacity-50"
              >
                Publish version {savedUnpublished.versionNumber}
              </button>
            )}
            <span className="text-xs text-ink-muted">
              {dirty
                ? `Unsaved changes to version ${base.data.version.versionNumber}.`
                : `Showing version ${base.data.version.versionNumber}.`}
            </span>
          </form>
          {pendingPublish?.from === 'editor' && confirmForm}
          {message && (
            <p role="status" className="rounded-sm border border-ledger/40 bg-ledger-light px-3 py-2 text-sm">
              {message}
            </p>
          )}
          {save.isError && (
            <div className="space-y-1">
              <p role="alert" className="text-sm text-alert">
                {save.error.message}
              </p>
              <ProblemList problems={saveProblems} heading="Not saved" onShow={setPart} />
            </div>
          )}
          {publish.isError && (
            <div className="space-y-1">
              <p role="alert" className="text-sm text-alert">
                {publish.error.message}
              </p>
              <ProblemList problems={publishProblems} heading="Not published" onShow={setPart} />
            </div>
          )}
        </section>

        <PreviewPane
          sampleRuns={editor.data.sampleRuns}
          sampleRunId={sampleRunId ?? null}
          onSampleRun={setSampleRunId}
          preview={preview.data}
          lastGoodHtml={lastGoodHtml}
          updating={waiting}
          error={preview.isError ? preview.error.message : null}
        />
      </div>

      <div className="mt-6 space-y-4">
        <PendingPublicationsPanel templateId={templateId} />
        <VersionsPanel
          template={template}
          baseVersionId={baseVersionId}
          publishing={publish.isPending}
          onOpen={openVersion}
          onPublish={(versionId) => onPublish(versionId, 'versions')}
          confirmForm={pendingPublish?.from === 'versions' ? confirmForm : null}
        />
      </div>
    </div>
  );
}
