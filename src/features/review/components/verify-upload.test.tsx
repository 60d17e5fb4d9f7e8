import { fireEvent, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { pdfVerificationSchema, VERIFY_UPLOAD_FIELD } from '../../../../shared/api/review.ts';
import { json, mockApi, refusal, setCsrfToken } from '../../../testing/api-mock.ts';
import { renderWithQueries } from '../../../testing/render.tsx';
import VerifyUpload from './verify-upload.tsx';

const SHA = 'c0ffee'.padEnd(64, '0');

/** What POST /api/verify answers for the signed output of RL-2026-0004 version 2. */
const verified = pdfVerificationSchema.parse({
  fileName: 'RL-2026-0004-v2.pdf',
  byteSize: 812_345,
  sha256: SHA,
  match: 'signed-record',
  record: {
    reportId: 4,
    reportNumber: 'RL-2026-0004',
    reportTitle: 'Assay of batch B001 at 25 °C',
    versionNumber: 2,
    reviewUrl: '/review/reports/4/versions/2',
    signatures: [
      {
        signerName: 'Dr. Ana Ruiz',
        meaning: 'Approved',
        comment: null,
        signedAt: '2026-03-02T09:15:00.000Z',
        signedAtText: '2026-03-02T10:15:00+01:00',
        timeZone: 'Europe/Berlin',
      },
    ],
  },
  seal: {
    signed: true,
    valid: true,
    trusted: true,
    signerSubject: 'CN=Rateledger Seal',
    signingTime: '2026-03-02T09:15:01.000Z',
    reason: 'The seal covers the whole file.',
  },
  verdict: 'This file is the signed record of RL-2026-0004 version 2, byte for byte.',
  verdictKind: 'verified',
});

function choosePdf() {
  const file = new File(['%PDF-1.7 …'], 'RL-2026-0004-v2.pdf', { type: 'application/pdf' });
  fireEvent.change(screen.getByLabelText('PDF file'), { target: { files: [file] } });
  return file;
}

describe('the PDF check on the verification page', () => {
  it('sends the chosen PDF with the CSRF token and shows what the records say', async () => {
    setCsrfToken('csrf-123');
    const requests = mockApi([{ method: 'POST', path: '/api/verify', respond: () => json(200, verified) }]);
    renderWithQueries(<VerifyUpload />);

    const file = choosePdf();
    fireEvent.click(screen.getByRole('button', { name: 'Check the file' }));

    expect(await screen.findByRole('heading', { name: 'Verified: this is the signed record' })).toBeDefined();
    expect(screen.getByText(verified.verdict)).toBeDefined();
    const record = screen.getByRole('link', { name: /RL-2026-0004 version 2/ });
    expect(record.getAttribute('href')).toBe('/review/reports/4/versions/2');
    const signatures = screen.getByRole('table');
    expect(within(signatures).getByRole('cell', { name: 'Dr. Ana Ruiz' })).toBeDefined();
    expect(within(signatures).getByRole('cell', { name: '2026-03-02T10:15:00+01:00' })).toBeDefined();

    const [request] = requests;
    expect(request?.method).toBe('POST');
    expect(request?.headers.get('x-csrf-token')).toBe('csrf-123');
    const sent = request?.body instanceof FormData ? request.body.get(VERIFY_UPLOAD_FIELD) : null;
    expect(sent instanceof File && [sent.name, sent.size]).toEqual([file.name, file.size]);
  });

  it('asks for a file before sending anything', () => {
    const requests = mockApi([]);
    renderWithQueries(<VerifyUpload />);

    fireEvent.click(screen.getByRole('button', { name: 'Check the file' }));

    expect(screen.getByRole('alert').textContent).toBe('Choose a PDF file first.');
    expect(requests).toHaveLength(0);
  });

  it('shows the message of a refusal', async () => {
    mockApi([
      {
        method: 'POST',
        path: '/api/verify',
        respond: () => refusal(415, 'The file is not a PDF. Choose the PDF of a Rateledger report.'),
      },
    ]);
    renderWithQueries(<VerifyUpload />);

    choosePdf();
    fireEvent.click(screen.getByRole('button', { name: 'Check the file' }));

    const alert = await screen.findByRole('alert');
    expect(alert.textContent).toBe('The file is not a PDF. Choose the PDF of a Rateledger report.');
    expect(screen.queryByRole('heading')).toBeNull();
  });
});
