import type { TemplateEditorResponse, TemplatePreviewResponse } from '../../../../shared/api/templates.ts';

interface PreviewPaneProps {
  sampleRuns: TemplateEditorResponse['sampleRuns'];
  sampleRunId: number | null;
  onSampleRun(runId: number | null): void;
  preview: TemplatePreviewResponse | undefined;
  /** The last HTML that rendered, kept on screen while the draft has problems. */
  lastGoodHtml: string | null;
  updating: boolean;
  error: string | null;
}

/**
 * The server-rendered preview in a sandboxed frame: `sandbox` with no permissions at all (no
 * scripts, no forms, no same-origin access), and the HTML the server returns has every script
 * removed besides.
 */
export function PreviewPane({
  sampleRuns,
  sampleRunId,
  onSampleRun,
  preview,
  lastGoodHtml,
  updating,
  error,
}: PreviewPaneProps) {
  const html = preview?.html ?? lastGoodHtml;
  const stale = preview !== undefined && preview.html === null && lastGoodHtml !== null;
  return (
    <section aria-label="Preview" className="flex flex-col">
      <div className="flex flex-wrap items-center gap-2 text-sm">
        <label htmlFor="template-preview-sample" className="font-semibold">
          Preview with
        </label>
        <select
          id="template-preview-sample"
          className="min-w-0 flex-1 rounded-sm border border-rule bg-white px-2 py-1"
          value={sampleRunId ?? ''}
          onChange={(event) => onSampleRun(event.target.value === '' ? null : Number(event.target.value))}
        >
          {sampleRuns.map((run) => (
            <option key={run.id} value={run.id}>
              {run.label}
            </option>
          ))}
          <option value="">Invented sample analysis (built in)</option>
        </select>
        <span
          role="status"
          aria-live="polite"
          className="text-xs text-ink-muted"
          data-preview-state={updating ? 'updating' : 'idle'}
        >
          {updating
            ? 'Updating preview…'
            : preview
              ? preview.html
                ? 'Preview up to date'
                : 'Draft checked: it has problems'
              : ''}
        </span>
      </div>
      {error && (
        <p
          role="alert"
          className="mt-2 rounded-sm border border-alert/40 bg-alert/5 px-2 py-1 text-sm text-alert"
        >
          {error}
        </p>
      )}
      {stale && (
        <p className="mt-2 text-xs text-alert">
          The draft has problems (listed under the editor); the preview shows the last text that rendered.
        </p>
      )}
      {html ? (
        <iframe
          title="Report preview"
          sandbox=""
          srcDoc={html}
          className={`mt-2 h-[760px] w-full rounded-sm border border-rule bg-white ${stale ? 'opacity-50' : ''}`}
        />
      ) : (
        <p className="mt-2 rounded-sm border border-dashed border-rule bg-white p-6 text-sm text-ink-muted">
          {preview ? 'Nothing to show until the template compiles.' : 'Rendering the preview…'}
        </p>
      )}
    </section>
  );
}
