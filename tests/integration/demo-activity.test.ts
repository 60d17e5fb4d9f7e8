import { mkdtempSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runDemoActivity } from '../../server/demo/demo-activity.ts';
import { runAnalysis } from '../../server/features/analysis/analysis-runs.ts';
import type { RenderWorker } from '../../server/features/reports/queue/render-worker.ts';
import { closeSigningBrowsers } from '../../server/features/signing/signed-output.ts';
import { auditEvents, organisations, reports, signatures } from '../../server/platform/db/schema/index.ts';
import { reportStorage } from '../../server/platform/storage/report-storage.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';
import { startTestRenderWorker } from './render-fixture.ts';
import { makeAnalysisRun } from './reports-fixture.ts';

/**
 * The demo people's first work (Rateledger issue 15 §4): run against a real server with the real
 * render worker, the analyst's two reports are made and submitted through the product's own
 * pages, the reviewer signs the first, and the second waits in the reviewer's queue. A second
 * run finds the reports and does nothing.
 */

const reportsDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-demo-activity-reports-'));
const signingDir = mkdtempSync(path.join(os.tmpdir(), 'rateledger-demo-activity-signing-'));
process.env.REPORTS_DIR = reportsDir;
process.env.SIGNING_DIR = signingDir;

let world: TestWorld;
let worker: RenderWorker;
let server: Server;
let baseUrl: string;
let slug: string;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  const db = world.database.db;
  const { datasetId } = await makeAnalysisRun(db, world.organisationId, world.users.analyst!);
  const analyst = world.users.analyst!;
  await runAnalysis(db, {
    organisationId: world.organisationId,
    datasetId,
    options: { order: 1 },
    actor: { userId: analyst.id, label: analyst.email },
  });
  [{ slug }] = (await db
    .select({ slug: organisations.slug })
    .from(organisations)
    .where(eq(organisations.id, world.organisationId))) as [{ slug: string }];
  worker = await startTestRenderWorker(db, reportStorage(reportsDir));
  server = await new Promise((resolve) => {
    const listening = world.app.listen(0, '127.0.0.1', () => resolve(listening));
  });
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 120_000);

afterAll(async () => {
  await new Promise<void>((resolve) => (server ? server.close(() => resolve()) : resolve()));
  await closeSigningBrowsers();
  await worker?.close();
  await world?.close();
  rmSync(reportsDir, { recursive: true, force: true });
  rmSync(signingDir, { recursive: true, force: true });
});

describe('the demo activity', () => {
  it('makes two reports through the pages: one signed by the reviewer, one waiting in their queue; a second run does nothing', async () => {
    const people = {
      organisationSlug: slug,
      analyst: world.users.analyst!,
      reviewer: world.users.reviewer!,
    };
    expect(await runDemoActivity(world.database.db, baseUrl, people)).toBe('done');
    const db = world.database.db;
    const made = await db.select().from(reports).where(eq(reports.organisationId, world.organisationId));
    expect(made).toHaveLength(2);
    const signed = await db
      .select()
      .from(signatures)
      .where(eq(signatures.organisationId, world.organisationId));
    expect(signed).toHaveLength(1);
    expect(signed[0]!.signerId).toBe(world.users.reviewer!.id);
    // The actions are the people's own: recorded with their accounts, not the system's.
    const actions = await db
      .select({ action: auditEvents.action, actor: auditEvents.actorUserId })
      .from(auditEvents)
      .where(eq(auditEvents.organisationId, world.organisationId));
    expect(actions.filter((event) => event.action === 'report.signed').map((event) => event.actor)).toEqual([
      world.users.reviewer!.id,
    ]);
    expect(actions.filter((event) => event.action === 'review.submitted')).toHaveLength(2);
    // The reviewer's queue holds the waiting report.
    const { agent } = await signIn(world.app, world.users.reviewer!.email, world.users.reviewer!.password);
    const queue = await agent.get('/review');
    expect(queue.status).toBe(200);
    expect(queue.text).toContain('excursion assessment');
    expect(await runDemoActivity(world.database.db, baseUrl, people)).toBe('already-present');
  }, 240_000);
});
