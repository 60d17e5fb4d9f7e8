import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { type Request, Router } from 'express';
import {
  AUDIT_PAGE_SIZE,
  type AuditFilter,
  auditFilterErrors,
  auditFilterQuery,
  auditFilterSchema,
} from '../../../shared/api/audit.ts';
import { recordIdSchema } from '../../../shared/api/studies.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { configuredAuditAnchor } from '../../platform/audit/audit-anchor.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { OrganisationChainResult } from '../../platform/audit/organisation-chain-result.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { auditCsvChunks } from './audit-export.ts';
import {
  AUDIT_EXPORTED_ACTION,
  type AuditEventRow,
  auditEventView,
  auditFilterChoices,
  auditOrganisation,
  checkAuditChain,
  findAuditEvent,
  lastAuditEventId,
  listAuditEvents,
  recentChainChecks,
  zonedTime,
} from './audit-viewer.ts';
import {
  chainCheckProgressView,
  findChainCheck,
  parseChainCheckJobSettings,
  requestChainCheck,
} from './chain-check-jobs.ts';
import { openChainCheckQueue } from './chain-check-queue.ts';

/** Who may read the audit trail: those who review records and those who administer them. */
const AUDITORS = ['admin', 'reviewer'] as const;

/** The query as typed, for refilling the form (only single text values; anything else is dropped). */
function typedValues(req: Request): Record<string, string> {
  return Object.fromEntries(
    Object.entries(req.query).filter((entry): entry is [string, string] => typeof entry[1] === 'string'),
  );
}

const withoutPage = ({ page: _page, ...rest }: AuditFilter) => rest;

export function auditRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;
  // The web process only sends chain-check jobs, through the app's own pool (started on first use).
  const chainCheckQueue = openChainCheckQueue({ pool: services.pool });

  router.get('/audit', requireRole(...AUDITORS), async (req, res) => {
    const organisationId = req.user!.organisationId;
    const parsed = auditFilterSchema.safeParse(req.query);
    const [organisation, choices] = await Promise.all([
      auditOrganisation(db, organisationId),
      auditFilterChoices(db, organisationId),
    ]);
    const values = typedValues(req);
    if (values.action && !choices.actions.includes(values.action)) choices.actions.push(values.action);
    const locals = {
      title: 'Audit trail',
      organisation,
      values,
      people: choices.people.map((person) => ({ ...person, selected: String(person.id) === values.user })),
      actions: choices.actions.map((action) => ({ action, selected: action === values.action })),
      recordTypes: choices.recordTypes.map((type) => ({ type, selected: type === values.recordType })),
    };
    if (!parsed.success) {
      const errors = auditFilterErrors(parsed.error);
      return renderPage(
        req,
        res,
        'audit',
        { ...locals, errors, errorCount: Object.keys(errors).length },
        400,
      );
    }
    const filter = parsed.data;
    const page = await listAuditEvents(db, organisationId, filter, organisation.timeZone);
    const first = (page.page - 1) * AUDIT_PAGE_SIZE + 1;
    const link = (target: number) => `/audit?${auditFilterQuery(filter, target)}`;
    renderPage(req, res, 'audit', {
      ...locals,
      errors: {},
      filtered: auditFilterQuery(withoutPage(filter)) !== '',
      events: page.events.map((row) => auditEventView(row, organisation.timeZone)),
      pagination: {
        total: page.total,
        page: page.page,
        pageCount: page.pageCount,
        first: Math.min(first, page.total),
        last: Math.min(first + page.events.length - 1, page.total),
        previousHref: page.page > 1 ? link(Math.min(page.page - 1, page.pageCount)) : null,
        nextHref: page.page < page.pageCount ? link(page.page + 1) : null,
        beyondEnd: page.total > 0 && page.events.length === 0,
      },
      exportHref: `/audit/export.csv?${auditFilterQuery(withoutPage(filter))}`,
    });
  });

  router.get('/audit/export.csv', requireRole(...AUDITORS), async (req, res) => {
    const filter = auditFilterSchema.parse(req.query);
    const organisation = await auditOrganisation(db, req.user!.organisationId);
    const upToEventId = await lastAuditEventId(db);
    // Reading the trail out is itself recorded (who took which events, and up to which one).
    await appendAuditEvent(db, {
      organisationId: organisation.id,
      actorUserId: req.user!.id,
      actorLabel: req.user!.email,
      action: AUDIT_EXPORTED_ACTION,
      after: { filter: withoutPage(filter), upToEventId, format: 'csv' },
      context: auditContext(req),
    });
    const day = new Date().toISOString().slice(0, 10);
    res.status(200);
    res.set({
      'Content-Type': 'text/csv; charset=utf-8; header=present',
      'Content-Disposition': `attachment; filename="audit-trail-${organisation.slug}-${day}.csv"`,
      'Cache-Control': 'no-store',
    });
    const chunks = auditCsvChunks(db, organisation.id, filter, organisation.timeZone, upToEventId);
    await pipeline(Readable.from(chunks), res);
  });

  // The checkpoints that anchor the chain outside the database, with the public keys that verify
  // them: the companion of the CSV export (see docs/audit-trail-security.md for checking them).
  router.get('/audit/export-checkpoints.json', requireRole(...AUDITORS), async (req, res) => {
    const organisation = await auditOrganisation(db, req.user!.organisationId);
    const anchor = configuredAuditAnchor();
    const lines = await anchor.readCheckpoints(db);
    await appendAuditEvent(db, {
      organisationId: organisation.id,
      actorUserId: req.user!.id,
      actorLabel: req.user!.email,
      action: AUDIT_EXPORTED_ACTION,
      after: { format: 'checkpoints', checkpoints: lines.length },
      context: auditContext(req),
    });
    const day = new Date().toISOString().slice(0, 10);
    res.set({
      'Content-Disposition': `attachment; filename="audit-checkpoints-${organisation.slug}-${day}.json"`,
      'Cache-Control': 'no-store',
    });
    res.json({
      description:
        'Signed checkpoints of the audit chain (head event id and hash). Each signature is Ed25519 over the canonical JSON (keys sorted) of the other fields.',
      publicKeys: anchor.publicKeys(),
      checkpoints: lines.map((line) =>
        line.status === 'verified'
          ? { line: line.line, ...line.checkpoint }
          : { line: line.line, unverifiable: line.reason },
      ),
    });
  });

  router.get('/audit/events/:eventId', requireRole(...AUDITORS), async (req, res) => {
    const eventId = recordIdSchema.parse(req.params.eventId);
    const organisation = await auditOrganisation(db, req.user!.organisationId);
    const row = await findAuditEvent(db, organisation.id, eventId);
    if (!row) throw new HttpError(404, `There is no audit event ${eventId} in your organisation's trail.`);
    const event = auditEventView(row, organisation.timeZone);
    renderPage(req, res, 'audit-event', {
      title: `Audit event ${eventId}`,
      organisation,
      event,
      events: [event],
    });
  });

  router.get('/audit/chain', requireRole(...AUDITORS), async (req, res) => {
    const organisation = await auditOrganisation(db, req.user!.organisationId);
    const runId = typeof req.query.run === 'string' ? recordIdSchema.parse(req.query.run) : null;
    const run = runId === null ? null : await findChainCheck(db, organisation.id, runId);
    if (runId !== null && !run)
      throw new HttpError(404, `There is no chain check ${runId} of your organisation.`);
    if (run?.status === 'done' && run.outcomeEventId)
      return res.redirect(303, `/audit/chain?check=${run.outcomeEventId}`);
    // While it runs the page reloads itself every few seconds (a Refresh header: no script needed).
    if (run && run.status !== 'failed') res.set('Refresh', '3');
    const checks = await recentChainChecks(db, organisation.id);
    const wanted = typeof req.query.check === 'string' ? Number(req.query.check) : null;
    const views = await Promise.all(
      checks.map(async (row) => {
        const outcome = chainOutcome(row);
        const brokenId = outcome?.firstBrokenLink?.id;
        const visible = brokenId ? (await findAuditEvent(db, organisation.id, brokenId)) !== null : false;
        return {
          id: row.id,
          time: zonedTime(row.occurredAt, organisation.timeZone),
          who: row.actorName ?? row.actorLabel,
          outcome,
          brokenVisible: visible,
          highlighted: row.id === wanted,
        };
      }),
    );
    renderPage(req, res, 'audit-chain', {
      title: 'Audit trail chain check',
      organisation,
      latest: views.find((view) => view.highlighted) ?? null,
      run: run ? chainCheckProgressView(run) : null,
      checks: views,
    });
  });

  router.post('/audit/chain', requireRole(...AUDITORS), async (req, res) => {
    // A small trail is checked at once; a large one in the background, with its progress shown.
    const events = await lastAuditEventId(db);
    if (events > parseChainCheckJobSettings().inRequestMaxEvents) {
      const checkId = await requestChainCheck(db, chainCheckQueue, req.user!, auditContext(req), events);
      return res.redirect(303, `/audit/chain?run=${checkId}`);
    }
    const outcome = await checkAuditChain(db, req.user!, auditContext(req));
    res.redirect(303, `/audit/chain?check=${outcome.eventId}`);
  });

  return router;
}

/** The outcome a chain-check event recorded, read defensively (it is data from the database). */
function chainOutcome(row: AuditEventRow): Partial<OrganisationChainResult> | null {
  const value = row.afterValue as Partial<OrganisationChainResult> | null;
  if (!value || typeof value.ok !== 'boolean' || typeof value.eventsChecked !== 'number') return null;
  return value;
}
