import { useState } from 'react';
import {
  MAX_PUBLISH_REASON_LENGTH,
  publishTemplateVersionRequestSchema,
} from '../../../../shared/api/templates.ts';

interface PublishConfirmFormProps {
  versionId: number;
  versionNumber: number;
  /** An earlier version than the published one: publishing it is a rollback. */
  rollback: boolean;
  publishing: boolean;
  onConfirm(request: { versionId: number; reason: string; confirmed: true }): void;
  onCancel(): void;
}

/**
 * The change control of publishing or rolling back a template version: the reason (recorded in
 * the audit trail) and an explicit confirmation, checked with the server's own schema so the
 * message appears beside the field before anything is sent.
 */
export function PublishConfirmForm(props: PublishConfirmFormProps) {
  const { versionId, versionNumber, rollback, publishing } = props;
  const [reason, setReason] = useState('');
  const [confirmed, setConfirmed] = useState(false);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const verb = rollback ? `Roll back to version ${versionNumber}` : `Publish version ${versionNumber}`;

  const submit = (event: React.FormEvent) => {
    event.preventDefault();
    const parsed = publishTemplateVersionRequestSchema.safeParse({ versionId, reason, confirmed });
    if (!parsed.success) {
      const next: Record<string, string> = {};
      for (const issue of parsed.error.issues) next[String(issue.path[0])] ??= issue.message;
      setErrors(next);
      return;
    }
    setErrors({});
    props.onConfirm({ versionId, reason: parsed.data.reason, confirmed: true });
  };

  return (
    <form
      aria-label={verb}
      className="space-y-2 rounded-sm border border-ledger/50 bg-ledger-light p-3 text-sm"
      onSubmit={submit}
      noValidate
    >
      <p className="font-semibold">
        {verb}: every report rendered from now on uses it; earlier report versions keep theirs.
      </p>
      <label className="flex flex-col">
        <span>Reason for the change (recorded in the audit trail)</span>
        <textarea
          className="mt-1 rounded-sm border border-rule px-2 py-1"
          rows={2}
          maxLength={MAX_PUBLISH_REASON_LENGTH}
          value={reason}
          aria-invalid={errors.reason ? true : undefined}
          aria-describedby={errors.reason ? `publish-reason-error-${versionId}` : undefined}
          onChange={(event) => setReason(event.target.value)}
        />
      </label>
      {errors.reason && (
        <p id={`publish-reason-error-${versionId}`} className="text-alert">
          {errors.reason}
        </p>
      )}
      <label className="flex items-start gap-2">
        <input
          type="checkbox"
          className="mt-1"
          checked={confirmed}
          aria-invalid={errors.confirmed ? true : undefined}
          onChange={(event) => setConfirmed(event.target.checked)}
        />
        <span>I confirm that new reports are to use version {versionNumber}.</span>
      </label>
      {errors.confirmed && <p className="text-alert">{errors.confirmed}</p>}
      <div className="flex gap-3">
        <button
          type="submit"
          disabled={publishing}
          className="rounded-sm bg-ledger px-3 py-1 font-semibold text-white disabled:opacity-60"
        >
          {rollback ? 'Confirm the rollback' : 'Confirm the publication'}
        </button>
        <button type="button" className="underline" onClick={props.onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}
