import { useState } from 'react';
import {
  decidePublicationRequestSchema,
  type PendingPublication,
} from '../../../../shared/api/template-publication.ts';
import { MAX_PUBLISH_REASON_LENGTH } from '../../../../shared/api/templates.ts';
import { useDecidePublication, usePendingPublications } from '../api/pending-publications.ts';

const when = (iso: string) => `${iso.slice(0, 16).replace('T', ' ')} UTC`;

function describe(item: PendingPublication): string {
  return item.rollback
    ? `Roll back to version ${item.versionNumber}`
    : `Publish version ${item.versionNumber}`;
}

/** One proposal: who proposed it and why, and — for another admin — the approve/refuse form. */
function PendingItem({ templateId, item }: { templateId: number; item: PendingPublication }) {
  const decide = useDecidePublication(templateId);
  const [reason, setReason] = useState('');
  const [confirmed, setConfirmed] = useState(false);
  const [errors, setErrors] = useState<Record<string, string>>({});

  const submit = (decision: 'approve' | 'refuse') => {
    const parsed = decidePublicationRequestSchema.safeParse({ decision, reason, confirmed });
    if (!parsed.success) {
      const next: Record<string, string> = {};
      for (const issue of parsed.error.issues) next[String(issue.path[0])] ??= issue.message;
      setErrors(next);
      return;
    }
    setErrors({});
    decide.mutate({ requestId: item.id, request: { decision, reason: parsed.data.reason, confirmed: true } });
  };

  return (
    <li className="rounded-sm border border-rule p-3 text-sm" data-request={item.id}>
      <p className="font-semibold">
        {describe(item)}
        {item.previousVersionNumber !== null && ` (version ${item.previousVersionNumber} was published)`}
      </p>
      <p className="text-ink-muted">
        Proposed by {item.proposedBy}, {when(item.proposedAt)}. Reason: {item.reason}
      </p>
      {item.mayDecide ? (
        <form
          aria-label={`Decide: ${describe(item)}`}
          className="mt-2 space-y-2"
          noValidate
          onSubmit={(event) => event.preventDefault()}
        >
          <label className="flex flex-col">
            <span>Reason for your decision (recorded in the audit trail)</span>
            <textarea
              className="mt-1 rounded-sm border border-rule px-2 py-1"
              rows={2}
              maxLength={MAX_PUBLISH_REASON_LENGTH}
              value={reason}
              aria-invalid={errors.reason ? true : undefined}
              onChange={(event) => setReason(event.target.value)}
            />
          </label>
          {errors.reason && <p className="text-alert">{errors.reason}</p>}
          <label className="flex items-start gap-2">
            <input
              type="checkbox"
              className="mt-1"
              checked={confirmed}
              onChange={(event) => setConfirmed(event.target.checked)}
            />
            <span>I have read the proposed version and decide as an admin of the organisation.</span>
          </label>
          {errors.confirmed && <p className="text-alert">{errors.confirmed}</p>}
          <div className="flex gap-3">
            <button
              type="button"
              disabled={decide.isPending}
              className="rounded-sm bg-ledger px-3 py-1 font-semibold text-white disabled:opacity-60"
              onClick={() => submit('approve')}
            >
              Approve and publish
            </button>
            <button
              type="button"
              disabled={decide.isPending}
              className="rounded-sm border border-alert px-3 py-1 font-semibold text-alert disabled:opacity-60"
              onClick={() => submit('refuse')}
            >
              Refuse
            </button>
          </div>
          {decide.isError && (
            <p role="alert" className="text-alert">
              {decide.error.message}
            </p>
          )}
        </form>
      ) : (
        <p className="mt-1">You proposed this; another admin approves or refuses it.</p>
      )}
    </li>
  );
}

/**
 * Publications waiting for a second admin (shown when the organisation requires one, or while a
 * proposal made under that rule is still open). New reports keep the published version until an
 * approval.
 */
export function PendingPublicationsPanel({ templateId }: { templateId: number }) {
  const publications = usePendingPublications(templateId);
  const data = publications.data;
  if (!data || (!data.needsSecondAdmin && data.pending.length === 0)) return null;
  return (
    <section
      aria-labelledby="pending-publications-heading"
      className="rounded-sm border border-rule bg-white p-4"
    >
      <h2 id="pending-publications-heading" className="font-serif text-xl">
        Waiting for a second admin
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        {data.needsSecondAdmin
          ? 'Your organisation requires a second admin to approve each publication or roll back. Until then new reports keep the published version.'
          : 'These were proposed while a second admin’s approval was required.'}
      </p>
      {data.pending.length === 0 ? (
        <p className="mt-2 text-sm">Nothing is waiting.</p>
      ) : (
        <ul className="mt-2 space-y-2">
          {data.pending.map((item) => (
            <PendingItem key={item.id} templateId={templateId} item={item} />
          ))}
        </ul>
      )}
    </section>
  );
}
