import { useState } from 'react';

/**
 * Shown when the server refused an import as a repeat of an existing dataset (409): the analyst
 * may use that dataset, or import again with a reason, which the audit trail keeps.
 */
export function DuplicateImportReason({
  pending,
  onImport,
}: {
  pending: boolean;
  onImport: (reason: string) => void;
}) {
  const [reason, setReason] = useState('');
  const [tried, setTried] = useState(false);
  const missing = tried && reason.trim() === '';
  return (
    <div className="space-y-2 rounded-sm border border-rule bg-paper px-4 py-3 text-sm">
      <label htmlFor="duplicate-reason" className="block font-semibold">
        Reason for importing it again
      </label>
      <textarea
        id="duplicate-reason"
        rows={2}
        value={reason}
        onChange={(event) => setReason(event.target.value)}
        aria-invalid={missing || undefined}
        aria-describedby={missing ? 'duplicate-reason-error' : undefined}
        className={`block w-full rounded-sm border px-2 py-1.5 ${missing ? 'border-alert' : 'border-rule'}`}
      />
      {missing && (
        <p id="duplicate-reason-error" className="text-alert">
          Give the reason; it is kept in the audit trail with the new dataset.
        </p>
      )}
      <button
        type="button"
        disabled={pending}
        onClick={() => {
          setTried(true);
          if (reason.trim() !== '') onImport(reason.trim());
        }}
        className="rounded-sm border border-ledger px-3 py-1.5 font-semibold text-ledger hover:bg-ledger-light disabled:opacity-60"
      >
        Import again with this reason
      </button>
    </div>
  );
}
