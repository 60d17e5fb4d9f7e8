import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import type { ReviewActionContext } from './review-action.ts';
import type { Decision } from './review-policy.ts';
import type { ReviewVersion } from './review-version.ts';

/**
 * Refusals that matter for accountability (someone trying to act on a record they may not) are
 * audit events of their own, committed in their own transaction even though the request fails.
 */

/** Records a refused attempt (it must outlive the failing request), then throws `error`. */
export async function recordRefusal(
  context: ReviewActionContext,
  subject: ReviewVersion,
  refusal: { auditAction: string; error: HttpError; detail: Record<string, unknown> },
): Promise<never> {
  const { actor } = context;
  await appendAuditEvent(context.db, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: refusal.auditAction,
    recordType: 'report_version',
    recordId: subject.version.id,
    after: {
      reportNumber: subject.report.reportNumber,
      versionNumber: subject.version.versionNumber,
      reviewState: subject.review.state,
      ...refusal.detail,
      refusal: refusal.error.message,
    },
    context: context.audit,
  });
  throw refusal.error;
}

/** Throws the policy's refusal as an HttpError, without recording it. */
export function throwIfRefused(decision: Decision): void {
  if (!decision.allowed) throw new HttpError(decision.status, decision.message);
}

/** Records the refusal when the policy says it must be, then throws it; does nothing when allowed. */
export async function enforceDecision(
  context: ReviewActionContext,
  subject: ReviewVersion,
  decision: Decision,
  detail: Record<string, unknown>,
): Promise<void> {
  if (decision.allowed) return;
  if (decision.auditAction)
    await recordRefusal(context, subject, {
      auditAction: decision.auditAction,
      error: new HttpError(decision.status, decision.message),
      detail,
    });
  throwIfRefused(decision);
}
