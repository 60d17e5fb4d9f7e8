import { z } from 'zod';
import { MAX_PUBLISH_REASON_LENGTH, publishTemplateVersionResponseSchema } from './templates.ts';

/**
 * The second-admin approval of template publications (EU GMP Annex 11 §10, changes made in a
 * controlled manner). When the organisation's setting requires it, publishing (or rolling back
 * to) a version makes a pending publication with the proposer's reason; another admin approves
 * or refuses it with a reason of their own, and only an approval makes the version the one new
 * reports use. With the setting off, publishing takes effect at once.
 */

/** A proposed publication that no admin has decided on yet. */
export const pendingPublicationSchema = z.object({
  id: z.number().int(),
  templateId: z.number().int(),
  versionId: z.number().int(),
  versionNumber: z.number().int(),
  /** The version published when it was proposed. */
  previousVersionNumber: z.number().int().nullable(),
  /** An earlier version than the one published now: approving it rolls back. */
  rollback: z.boolean(),
  reason: z.string(),
  proposedBy: z.string(),
  proposedAt: z.string(),
  /** False for the proposer: the one who proposes a change cannot approve it. */
  mayDecide: z.boolean(),
});
export type PendingPublication = z.infer<typeof pendingPublicationSchema>;

/** POST /api/admin/templates/:id/publish answers one of these two. */
export const publishOutcomeSchema = z.discriminatedUnion('status', [
  publishTemplateVersionResponseSchema.extend({ status: z.literal('published') }),
  z.object({ status: z.literal('pending'), pending: pendingPublicationSchema }),
]);
export type PublishOutcome = z.infer<typeof publishOutcomeSchema>;

/** GET /api/admin/templates/:id/publications — the rule in force and the pending proposals. */
export const pendingPublicationsResponseSchema = z.object({
  needsSecondAdmin: z.boolean(),
  pending: z.array(pendingPublicationSchema),
});
export type PendingPublicationsResponse = z.infer<typeof pendingPublicationsResponseSchema>;

export const publicationParamSchema = z.object({
  id: z.coerce.number().int().positive(),
  requestId: z.coerce.number().int().positive(),
});

const REASON_MESSAGE = 'Give the reason for your decision; it is recorded in the audit trail.';

/** POST /api/admin/templates/:id/publications/:requestId/decision */
export const decidePublicationRequestSchema = z.object({
  decision: z.enum(['approve', 'refuse'], { error: 'Choose to approve or to refuse.' }),
  reason: z
    .string({ error: REASON_MESSAGE })
    .trim()
    .min(1, REASON_MESSAGE)
    .max(MAX_PUBLISH_REASON_LENGTH, `Keep the reason under ${MAX_PUBLISH_REASON_LENGTH} characters.`),
  confirmed: z.literal(true, { error: 'Confirm your decision.' }),
});
export type DecidePublicationRequest = z.input<typeof decidePublicationRequestSchema>;

export const decidePublicationResponseSchema = z.object({
  decision: z.enum(['approved', 'refused']),
  /** What an approval published; null for a refusal. */
  published: publishTemplateVersionResponseSchema.nullable(),
});
export type DecidePublicationResponse = z.infer<typeof decidePublicationResponseSchema>;
