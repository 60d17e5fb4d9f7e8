import type { z } from 'zod';
import type { signReportSchema } from '../../../shared/api/review.ts';
import type { ReportStorage } from '../../platform/storage/report-storage.ts';
import type { ReviewActionContext } from './review-action.ts';

/** What the session says about signing: set by the route after the session's first signature. */
export interface SigningSession {
  firstSigningDone?: boolean;
}

/** The sign form as `signReportSchema` parsed it (trimmed, defaults filled in). */
export type SignReportInput = z.output<typeof signReportSchema>;

/** Who signs, in which session, with what the audit trail records, and where the signed PDF is kept. */
export interface SigningContext extends ReviewActionContext {
  storage: ReportStorage;
  session: SigningSession;
}

/** The signer's account row, read fresh for the signature (never the session's copy). */
export interface Signer {
  id: number;
  fullName: string;
  email: string;
}

/** The signed PDF produced and stored before any row names it. */
export interface SignedPdf {
  /** The database clock to the whole second: the instant printed on the signatures page. */
  signedAt: Date;
  timeZone: string;
  sha256: string;
  byteSize: number;
  /** Signatures on its signatures page, this one included. */
  signatureCount: number;
}
