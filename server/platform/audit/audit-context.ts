import type { Request } from 'express';

/** Where a recorded action came from: the client's address, its user agent and the request id. */
export type AuditRequestContext = {
  ip: string | null;
  userAgent: string | null;
  requestId: string | null;
};

/** The context a service passes on to `appendAuditEvent` (request context, or a job's own). */
export type AuditContext = Record<string, unknown>;

/**
 * The request context every audit event of a request carries (21 CFR 11.10(e): the audit trail
 * records the operator's actions; the address and client help trace them). One definition, so
 * every feature records the same fields.
 */
export function auditContext(req: Request): AuditRequestContext {
  return { ip: req.ip ?? null, userAgent: req.get('user-agent') ?? null, requestId: req.id ?? null };
}
