import { type FormEvent, useState } from 'react';
import { useUploadFile } from '../api/upload-file.ts';

/** Chooses a .xlsx or .csv file and uploads it; on success the mapping page opens. */
export function UploadForm({ studyId, limit }: { studyId: string; limit: string }) {
  const [file, setFile] = useState<File | null>(null);
  const upload = useUploadFile(studyId);
  const submit = (event: FormEvent) => {
    event.preventDefault();
    if (!file) return;
    upload.mutate(file, { onSuccess: ({ mapUrl }) => window.location.assign(mapUrl) });
  };
  return (
    <form onSubmit={submit} className="flex flex-wrap items-end gap-4" aria-label="Upload a file">
      <label className="block">
        <span className="text-sm font-semibold">Workbook or CSV file</span>
        <input
          type="file"
          name="file"
          accept=".xlsx,.csv,text/csv,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
          onChange={(event) => {
            setFile(event.target.files?.[0] ?? null);
            upload.reset();
          }}
          className="mt-1 block text-sm file:mr-3 file:rounded-sm file:border file:border-rule file:bg-paper file:px-3 file:py-1.5"
        />
        <span className="mt-1 block text-xs text-ink-muted">
          .xlsx or .csv, up to {limit}. The file is checked, then stored unchanged.
        </span>
      </label>
      <button
        type="submit"
        disabled={!file || upload.isPending}
        className="rounded-sm bg-ledger px-4 py-2 font-semibold text-white hover:bg-ledger-dark disabled:opacity-50"
      >
        {upload.isPending ? 'Uploading…' : 'Upload and map columns'}
      </button>
      {upload.isError && (
        <p
          role="alert"
          className="w-full rounded-sm border border-alert/40 bg-alert/10 px-3 py-2 text-sm text-alert"
        >
          {upload.error.message} Nothing was stored.
        </p>
      )}
    </form>
  );
}
