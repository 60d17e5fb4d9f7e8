import { type ReactNode, useState } from 'react';
import type { TemplateSummary } from '../../../../shared/api/templates.ts';
import { TableRegion } from '../../../components/table-region.tsx';
import { useTemplateDiff } from '../api/get-template-diff.ts';
import { VersionDiff } from './version-diff.tsx';

interface VersionsPanelProps {
  template: TemplateSummary;
  /** The version the draft started from. */
  baseVersionId: number | null;
  publishing: boolean;
  onOpen(versionId: number): void;
  /** Asks for the reason and confirmation of publishing (or rolling back to) a version. */
  onPublish(versionId: number): void;
  /** The reason-and-confirmation form of a publication asked for here, shown under the table. */
  confirmForm?: ReactNode;
}

const when = (iso: string) => `${iso.slice(0, 16).replace('T', ' ')} UTC`;

/** The versions with their creator, time, hash and state; open, publish or roll back; compare two. */
export function VersionsPanel({
  template,
  baseVersionId,
  publishing,
  onOpen,
  onPublish,
  confirmForm = null,
}: VersionsPanelProps) {
  const versions = template.versions;
  const published = template.publishedVersionNumber;
  const [from, setFrom] = useState<number | ''>('');
  const [to, setTo] = useState<number | ''>('');
  const [pair, setPair] = useState<{ from: number; to: number } | null>(null);
  const diff = useTemplateDiff(template.id, pair);
  const fromId = from === '' ? (versions[1]?.id ?? versions[0]?.id ?? 0) : from;
  const toId = to === '' ? (versions[0]?.id ?? 0) : to;

  return (
    <section aria-labelledby="versions-heading" className="rounded-sm border border-rule bg-white p-4">
      <h2 id="versions-heading" className="font-serif text-xl">
        Versions
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        New reports use the published version. Publishing an earlier version rolls back; both ask for a
        reason, recorded in the audit trail. Report versions rendered before keep the template version they
        were printed with.
      </p>
      <TableRegion label="Each saved version of the template" className="mt-3">
        <table className="w-full border-collapse text-sm">
          <thead>
            <tr className="border-b border-rule text-left">
              <th scope="col" className="px-2 py-1">
                Version
              </th>
              <th scope="col" className="px-2 py-1">
                Note
              </th>
              <th scope="col" className="px-2 py-1">
                Created
              </th>
              <th scope="col" className="px-2 py-1">
                SHA-256
              </th>
              <th scope="col" className="px-2 py-1">
                Actions
              </th>
            </tr>
          </thead>
          <tbody>
            {versions.map((version) => {
              const rollback = published !== null && version.versionNumber < published;
              const action = rollback
                ? `Roll back to version ${version.versionNumber}`
                : `Publish version ${version.versionNumber}`;
              return (
                <tr
                  key={version.id}
                  className="border-b border-rule/60 align-top"
                  data-version={version.versionNumber}
                >
                  <td className="px-2 py-1.5 font-semibold">
                    {version.versionNumber}
                    {version.published && (
                      <span className="ml-2 rounded-sm bg-ledger px-1.5 py-0.5 text-xs font-semibold uppercase tracking-wider text-white">
                        Published
                      </span>
                    )}
                    {version.id === baseVersionId && (
                      <span className="ml-2 text-xs text-ink-muted">(in the editor)</span>
                    )}
                  </td>
                  <td className="px-2 py-1.5">{version.note}</td>
                  <td className="px-2 py-1.5 text-ink-muted">
                    {version.createdBy}
                    <br />
                    {when(version.createdAt)}
                  </td>
                  <td className="px-2 py-1.5 font-mono text-xs" title={version.sha256}>
                    {version.sha256.slice(0, 12)}…
                  </td>
                  <td className="px-2 py-1.5">
                    <div className="flex flex-wrap gap-2">
                      <button type="button" className="underline" onClick={() => onOpen(version.id)}>
                        Open in editor
                      </button>
                      {!version.published && (
                        <button
                          type="button"
                          disabled={publishing}
                          className="rounded-sm border border-ledger px-2 py-0.5 font-semibold text-ledger disabled:opacity-60"
                          onClick={() => onPublish(version.id)}
                        >
                          {action}
                        </button>
                      )}
                    </div>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </TableRegion>
      {confirmForm && <div className="mt-3">{confirmForm}</div>}

      {versions.length > 1 && (
        <form
          className="mt-4 flex flex-wrap items-end gap-3 text-sm"
          onSubmit={(event) => {
            event.preventDefault();
            setPair({ from: fromId, to: toId });
          }}
        >
          <label className="flex flex-col">
            <span className="font-semibold">Compare version</span>
            <select
              className="rounded-sm border border-rule px-2 py-1"
              value={fromId}
              onChange={(event) => setFrom(Number(event.target.value))}
            >
              {versions.map((version) => (
                <option key={version.id} value={version.id}>
                  {version.versionNumber}
                </option>
              ))}
            </select>
          </label>
          <label className="flex flex-col">
            <span className="font-semibold">with version</span>
            <select
              className="rounded-sm border border-rule px-2 py-1"
              value={toId}
              onChange={(event) => setTo(Number(event.target.value))}
            >
              {versions.map((version) => (
                <option key={version.id} value={version.id}>
                  {version.versionNumber}
                </option>
              ))}
            </select>
          </label>
          <button
            type="submit"
            className="rounded-sm border border-ledger px-3 py-1 font-semibold text-ledger"
          >
            Compare
          </button>
        </form>
      )}
      {diff.isError && (
        <p role="alert" className="mt-2 text-sm text-alert">
          {diff.error.message}
        </p>
      )}
      {diff.data && (
        <div className="mt-3 border-t border-rule pt-3">
          <VersionDiff diff={diff.data} />
        </div>
      )}
    </section>
  );
}
