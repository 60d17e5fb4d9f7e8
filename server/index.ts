import type { Server } from 'node:http';
import { createApp } from './app.ts';
import { DEMO_PASSWORDS_NOTE } from './demo/demo-accounts.ts';
import { startInProcessChainCheckWorker } from './features/audit-viewer/index.ts';
import { startInProcessRenderWorker } from './features/reports/index.ts';
import { closeSigningBrowsers } from './features/signing/index.ts';
import { startAuditAnchoring } from './platform/audit/audit-anchoring.ts';
import { parseEnvironment } from './platform/config/env.ts';
import { openDatabase } from './platform/db/client.ts';
import { logger } from './platform/logging/logger.ts';
import { startMail } from './platform/mail/start-mail.ts';

/** Starts the server; SIGINT/SIGTERM close the listener, then the pool. */
const environment = parseEnvironment();
const database = openDatabase(environment.DATABASE_URL);
const app = createApp(database, {
  sessionSecret: environment.SESSION_SECRET,
  cookieSecure: environment.COOKIE_SECURE,
  signInRateLimit: environment.SIGN_IN_RATE_LIMIT,
  trustProxy: environment.TRUST_PROXY,
});

// Mail: the local SMTP server on loopback unless SMTP_URL names a real one (see .env.example).
const mail = await startMail(database.db);

const server: Server = app.listen(environment.PORT, environment.HOST, () => {
  console.log(`\nRateledger is running at http://${environment.HOST}:${environment.PORT}\n`);
  console.log(`${mail.summary}\n`);
  if (environment.NODE_ENV !== 'production') console.log(DEMO_PASSWORDS_NOTE);
  console.log('Press Ctrl-C to stop.\n');
});

// Renders reports in this process too unless RENDER_WORKER=off (then only `npm run worker` does).
const renderWorker = startInProcessRenderWorker(database, environment.DATABASE_URL);

// Checkpoints of the audit chain, signed and logged outside the database (AUDIT_ANCHOR_* settings).
const auditAnchoring = startAuditAnchoring(database.db);

// Chain checks of trails too large for a request run here, in the background.
const chainCheckWorker = startInProcessChainCheckWorker(database.db, environment.DATABASE_URL);

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  logger.info({ signal }, 'stopping');
  server.close(async () => {
    await renderWorker.close();
    await chainCheckWorker.close();
    await auditAnchoring.close();
    await closeSigningBrowsers();
    await mail.close();
    await database.close();
    process.exit(0);
  });
  setTimeout(() => process.exit(1), 10_000).unref();
}
process.on('SIGINT', () => void shutdown('SIGINT'));
process.on('SIGTERM', () => void shutdown('SIGTERM'));
