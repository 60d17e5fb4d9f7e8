import { type FormEvent, useState } from 'react';
import { type PdfVerification, VERIFY_UPLOAD_LIMIT_BYTES } from '../../../../shared/api/review.ts';
import { TableRegion } from '../../../components/table-region.tsx';
import { useVerifyPdf } from '../api/verify-pdf.ts';

const LIMIT_MB = VERIFY_UPLOAD_LIMIT_BYTES / (1024 * 1024);
const TONE: Record<PdfVerification['verdictKind'], string> = {
  verified: 'border-ledger bg-ledger/10',
  altered: 'border-alert bg-alert/10 text-alert',
  unknown: 'border-rule bg-paper',
};
const HEADLINE: Record<PdfVerification['verdictKind'], string> = {
  verified: 'Verified: this is the signed record',
  altered: 'Not verified: the file was altered or is not the record',
  unknown: 'Not verified: does not match any signed record',
};

/** The verification page's upload: choose a PDF, send it, show what the records and the seal say. */
export default function VerifyUpload() {
  const [file, setFile] = useState<File | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const check = useVerifyPdf();

  function submit(event: FormEvent) {
    event.preventDefault();
    if (!file) return setProblem('Choose a PDF file first.');
    if (file.size > VERIFY_UPLOAD_LIMIT_BYTES)
      return setProblem(`The file is larger than ${LIMIT_MB} MB; a Rateledger report is far smaller.`);
    setProblem(null);
    check.mutate(file);
  }

  const result = check.data;
  return (
    <div>
      <form onSubmit={submit} className="flex flex-wrap items-end gap-3">
        <div>
          <label htmlFor="verify-file" className="text-sm font-semibold">
            PDF file
          </label>
          <input
            id="verify-file"
            type="file"
            accept="application/pdf,.pdf"
            className="mt-1 block text-sm"
            onChange={(event) => setFile(event.target.files?.[0] ?? null)}
          />
        </div>
        <button
          type="submit"
          disabled={check.isPending}
          className="rounded-sm bg-ledger px-4 py-2 text-white hover:opacity-90 disabled:opacity-50"
        >
          {check.isPending ? 'Checking…' : 'Check the file'}
        </button>
      </form>
      <p className="mt-1 text-xs text-ink-muted">Up to {LIMIT_MB} MB. The file is checked and not kept.</p>
      {(problem ?? (check.isError ? check.error.message : null)) && (
        <p role="alert" className="mt-3 text-sm text-alert">
          {problem ?? check.error?.message}
        </p>
      )}
      {result && (
        <section
          aria-live="polite"
          data-verdict={result.verdictKind}
          className={`mt-4 rounded-md border-2 p-4 text-sm ${TONE[result.verdictKind]}`}
        >
          <h3 className="font-serif text-lg">{HEADLINE[result.verdictKind]}</h3>
          <p className="mt-1">{result.verdict}</p>
          <dl className="mt-3 grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-ink">
            <dt className="text-ink-muted">File</dt>
            <dd>
              {result.fileName} ({result.byteSize.toLocaleString('en-GB')} bytes)
            </dd>
            <dt className="text-ink-muted">SHA-256</dt>
            <dd className="break-all font-mono text-xs">{result.sha256}</dd>
            <dt className="text-ink-muted">Stored record</dt>
            <dd>
              {result.record ? (
                <a className="text-ledger underline" href={result.record.reviewUrl}>
                  {result.record.reportNumber} version {result.record.versionNumber} —{' '}
                  {result.record.reportTitle}
                </a>
              ) : (
                'none matches this file'
              )}
            </dd>
            <dt className="text-ink-muted">Digital seal</dt>
            <dd>
              {result.seal.signed ? (result.seal.valid ? 'intact' : 'broken') : 'none'}
              {result.seal.signed && result.seal.valid && !result.seal.trusted
                ? ', certificate not trusted here'
                : ''}
              {' — '}
              {result.seal.reason}
            </dd>
          </dl>
          {result.record && result.record.signatures.length > 0 && (
            <TableRegion label="Signatures of the PDF" className="mt-3">
              <table className="w-full text-ink">
                <thead>
                  <tr className="border-b border-rule text-left">
                    <th className="py-1 pr-3">Signed by</th>
                    <th className="py-1 pr-3">Meaning</th>
                    <th className="py-1 pr-3">Date and time</th>
                    <th className="py-1">Comment</th>
                  </tr>
                </thead>
                <tbody>
                  {result.record.signatures.map((signature) => (
                    <tr key={signature.signedAt + signature.signerName} className="border-b border-rule/50">
                      <td className="py-1 pr-3 font-semibold">{signature.signerName}</td>
                      <td className="py-1 pr-3">{signature.meaning}</td>
                      <td className="py-1 pr-3 tabular-nums">{signature.signedAtText}</td>
                      <td className="py-1">{signature.comment ?? ''}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </TableRegion>
          )}
        </section>
      )}
    </div>
  );
}
