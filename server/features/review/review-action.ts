import type { z } from 'zod';
import type { returnForReworkSchema, submitForReviewSchema } from '../../../shared/api/review.ts';
import type { AuditContext } from '../../platform/audit/audit-context.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Database } from '../../platform/db/client.ts';

export type { AuditContext };

/** Which version an action is about: the route's parsed parameters. */
export interface ReviewTarget {
  reportId: number;
  versionNumber: number;
}

/** Who acts, and what every audit event of the action records about the request. */
export interface ReviewActionContext {
  db: Database;
  actor: SessionUser;
  audit: AuditContext;
}

/** The submit form as the route parsed it with `submitForReviewSchema` (trimmed, defaults filled in). */
export type SubmitForReviewInput = z.output<typeof submitForReviewSchema>;

/** The return form as the route parsed it with `returnForReworkSchema`. */
export type ReturnForReworkInput = z.output<typeof returnForReworkSchema>;
