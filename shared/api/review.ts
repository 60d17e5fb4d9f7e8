import { z } from 'zod';
import { MAX_CHECKLIST_ITEM_LENGTH, MAX_CHECKLIST_ITEMS } from './review-checklist.ts';

/**
 * The boundary of review and e-signature: submitting a report version for review, returning it
 * with a comment, signing it, and checking a PDF against the signed records. One schema per
 * boundary; the server-rendered forms post these fields and the verification island reads the
 * verification answer with `pdfVerificationSchema`.
 */

export const REVIEW_STATES = ['draft', 'in_review', 'returned', 'signed'] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

export const MAX_REVIEW_COMMENT_LENGTH = 2000;
export const MAX_SIGNATURE_COMMENT_LENGTH = 500;
/** A signed report of about six pages is ~1 MB; anything much larger is not one of ours. */
export const VERIFY_UPLOAD_LIMIT_BYTES = 25 * 1024 * 1024;
export const VERIFY_UPLOAD_FIELD = 'pdf';

export const reviewVersionParamSchema = z.object({
  reportId: z.coerce.number().int().positive().max(2_147_483_647),
  version: z.coerce.number().int().positive().max(2_147_483_647),
});

/** A form sends one value as a string and several as an array; both mean a list here. */
const idList = z.preprocess(
  (raw) => (raw === undefined || raw === '' ? [] : Array.isArray(raw) ? raw : [raw]),
  z
    .array(z.coerce.number({ error: 'Choose reviewers from the list.' }).int().positive().max(2_147_483_647))
    .min(1, 'Choose at least one reviewer.')
    .max(20, 'Choose at most 20 reviewers.'),
);

/** POST /review/reports/:reportId/versions/:version/submit */
export const submitForReviewSchema = z.object({
  reviewerIds: idList,
  note: z.string().trim().max(MAX_REVIEW_COMMENT_LENGTH, 'Keep the note under 2000 characters.').default(''),
});
export type SubmitForReviewRequest = z.input<typeof submitForReviewSchema>;

/** POST …/return: the comment is mandatory — it tells the author what to correct. */
export const returnForReworkSchema = z.object({
  comment: z
    .string({ error: 'Write what the author should correct.' })
    .trim()
    .min(1, 'Write what the author should correct.')
    .max(MAX_REVIEW_COMMENT_LENGTH, 'Keep the comment under 2000 characters.'),
});
export type ReturnForReworkRequest = z.input<typeof returnForReworkSchema>;

/**
 * POST …/sign. `identity` (the user's e-mail address, the identification code) is required on the
 * first signing of a session, the password always (21 CFR 11.200(a)(1)(i)). `reviewedSha256` is
 * the hash of the PDF the form showed, so a signer never signs something other than what they saw.
 */
export const signReportSchema = z.object({
  meaning: z
    .string({ error: 'Choose the meaning of your signature.' })
    .trim()
    .min(1, 'Choose the meaning of your signature.'),
  comment: z
    .string()
    .trim()
    .max(MAX_SIGNATURE_COMMENT_LENGTH, 'Keep the comment under 500 characters.')
    .default(''),
  identity: z.string().trim().max(320).optional(),
  password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.').max(1024),
  reviewedSha256: z
    .string({ error: 'The form is incomplete; reload the page.' })
    .regex(/^[0-9a-f]{64}$/, 'The form is incomplete; reload the page.'),
  /**
   * Where the record stood when the form was shown (`round:state:event`; record-stamp.ts).
   * Optional here so that who may sign is decided (and a refusal recorded) first; the signing
   * service refuses a signature without it.
   */
  recordStamp: z
    .string()
    .regex(/^\d{1,10}:[a-z_]{1,20}:\d{1,19}$/, 'The form is incomplete; reload the page.')
    .optional(),
  /**
   * The review checklist the form showed (its version id; absent when there was none) and the
   * items ticked, by their text. The signing service refuses a stale version (409) and a list
   * that leaves out an item of the current checklist (400).
   */
  checklistVersionId: z.preprocess(
    (raw) => (raw === '' ? undefined : raw),
    z.coerce
      .number({ error: 'The form is incomplete; reload the page.' })
      .int('The form is incomplete; reload the page.')
      .positive('The form is incomplete; reload the page.')
      .max(2_147_483_647, 'The form is incomplete; reload the page.')
      .optional(),
  ),
  checklistConfirmed: z.preprocess(
    (raw) => (raw === undefined || raw === '' ? [] : Array.isArray(raw) ? raw : [raw]),
    z.array(z.string().trim().max(MAX_CHECKLIST_ITEM_LENGTH)).max(MAX_CHECKLIST_ITEMS),
  ),
});
export type SignReportRequest = z.input<typeof signReportSchema>;

/** GET /verify?report=RL-2026-0001 */
export const verifyReportQuerySchema = z.object({
  report: z
    .string()
    .trim()
    .max(64, 'A report number is short, like RL-2026-0001.')
    .regex(/^[A-Za-z0-9][A-Za-z0-9_./-]*$/, 'A report number looks like RL-2026-0001.')
    .optional()
    .or(z.literal('').transform(() => undefined)),
});

const signatureSchema = z.object({
  signerName: z.string(),
  meaning: z.string(),
  comment: z.string().nullable(),
  signedAt: z.string(),
  /** The same instant as printed on the signatures page: ISO 8601 with the organisation's offset. */
  signedAtText: z.string(),
  timeZone: z.string(),
});

/** The answer of POST /api/verify: what the uploaded file is, as far as the records and the seal tell. */
export const pdfVerificationSchema = z.object({
  fileName: z.string(),
  byteSize: z.number().int(),
  sha256: z.string(),
  /** `signed-record`: byte-identical to a stored signed output; `unsigned-version`: a rendered but unsigned version; `no-match`. */
  match: z.enum(['signed-record', 'unsigned-version', 'no-match']),
  record: z
    .object({
      reportId: z.number().int(),
      reportNumber: z.string(),
      reportTitle: z.string(),
      versionNumber: z.number().int(),
      reviewUrl: z.string(),
      signatures: z.array(signatureSchema),
    })
    .nullable(),
  seal: z.object({
    signed: z.boolean(),
    valid: z.boolean(),
    trusted: z.boolean(),
    signerSubject: z.string().nullable(),
    signingTime: z.string().nullable(),
    reason: z.string(),
  }),
  /** One sentence for the person: matches, altered, or unknown. */
  verdict: z.string(),
  verdictKind: z.enum(['verified', 'altered', 'unknown']),
});
export type PdfVerification = z.infer<typeof pdfVerificationSchema>;
