import { createHash } from 'node:crypto';
import { canonicalJson } from './canonical-json.ts';

/** The hash of the first event's predecessor. */
export const GENESIS_HASH = '0'.repeat(64);

export interface HashedAuditContent {
  previousHash: string;
  /** Database time as `YYYY-MM-DDTHH:MM:SS.ffffffZ` (microseconds, UTC). */
  occurredAt: string;
  organisationId: number | null;
  actorUserId: number | null;
  actorLabel: string;
  action: string;
  recordType: string | null;
  recordId: string | null;
  beforeValue: unknown;
  afterValue: unknown;
  context: unknown;
}

/** SHA-256 (hex) over the canonical JSON of an event's content, including the previous hash. */
export function auditEventHash(content: HashedAuditContent): string {
  return createHash('sha256').update(canonicalJson(content)).digest('hex');
}
