import express, { type Express } from 'express';
import session from 'express-session';
import helmet from 'helmet';
import { analysisRoutes } from './features/analysis/index.ts';
import { auditRoutes } from './features/audit-viewer/index.ts';
import { apiRoutes, pageRoutes } from './features/dashboard/index.ts';
import { inboxCount, inboxRoutes } from './features/inbox/index.ts';
import { uploadRoutes } from './features/intake/index.ts';
import { outboxRoutes } from './features/outbox/index.ts';
import { accountRoutes, authRoutes, userAdminRoutes } from './features/people/index.ts';
import { reportRoutes } from './features/reports/index.ts';
import { retirementRoutes } from './features/retirement/index.ts';
import { reviewRoutes } from './features/review/index.ts';
import { settingsRoutes } from './features/settings/index.ts';
import { studyRoutes } from './features/studies/index.ts';
import { temperatureLogRoutes } from './features/temperature-logs/index.ts';
import { templateAdminRoutes } from './features/templates/index.ts';
import { publicVerificationRoutes, verificationRoutes } from './features/verification/index.ts';
import type { AppOptions, AppServices } from './platform/app-services.ts';
import { createCsrf } from './platform/auth/csrf.ts';
import { createAuthenticator } from './platform/auth/passport-setup.ts';
import { sessionExtendRoutes, sessionTimeoutLocals } from './platform/auth/session-extend-routes.ts';
import { createSessionStore } from './platform/auth/session-store.ts';
import { parseRenderConfig } from './platform/config/render-config.ts';
import type { TrustProxy } from './platform/config/trust-proxy.ts';
import type { DatabaseHandle } from './platform/db/client.ts';
import { errorHandler, notFound } from './platform/http/error-handler.ts';
import { healthRoutes } from './platform/http/health-routes.ts';
import { requireJsonBody } from './platform/http/require-json.ts';
import { requestLog } from './platform/logging/request-log.ts';
import { reportStorage } from './platform/storage/report-storage.ts';
import { CLIENT_DIST, readClientAssets } from './platform/web/assets.ts';
import { createViewEngine, viewFolders } from './platform/web/view-engine.ts';

export const DEFAULT_OPTIONS: Omit<AppOptions, 'sessionSecret'> = {
  cookieSecure: false,
  cookieName: 'rateledger.sid',
  signInRateLimit: 20,
  rateLimitPrefix: '',
  idleMinutes: 30,
};

/** What `createApp` takes beyond the app options every route sees. */
export interface CreateAppOptions extends Partial<AppOptions> {
  sessionSecret: string;
  /**
   * Express's `trust proxy`: which proxies' X-Forwarded-For/-Proto to believe (TRUST_PROXY).
   * Off by default, so that nobody can choose their own address for the sign-in limits.
   */
  trustProxy?: TrustProxy;
  /** The minimum duration of a refused sign-in (default `REFUSAL_FLOOR_MS`). */
  refusalFloorMs?: number;
  /**
   * One statement per signed-in request (`session-store.ts`; default true). False restores
   * connect-pg-simple's three (session, user, expiry rewrite): the anchor of the bench.
   */
  sessionFastPath?: boolean;
}

/**
 * Builds the Express app. No state lives in process memory: sessions, rate-limit counters and
 * everything else are in PostgreSQL, so several instances can serve behind a load balancer.
 */
export function createApp(database: DatabaseHandle, options: CreateAppOptions): Express {
  const { trustProxy = false, refusalFloorMs, sessionFastPath = true, ...appOptions } = options;
  const settings: AppOptions = { ...DEFAULT_OPTIONS, ...appOptions };
  const renderConfig = parseRenderConfig();
  const services: AppServices = {
    db: database.db,
    pool: database.pool,
    options: settings,
    renderConfig,
    storage: reportStorage(renderConfig.reportsDir),
    authenticator: createAuthenticator(database.db, {
      secret: settings.sessionSecret,
      cookieSecure: settings.cookieSecure,
      counterPrefix: settings.rateLimitPrefix,
      ...(refusalFloorMs === undefined ? {} : { refusalFloorMs }),
    }),
  };
  const csrf = createCsrf({ secret: settings.sessionSecret, secure: settings.cookieSecure });
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', trustProxy);
  const views = viewFolders();
  app.engine('hbs', createViewEngine(views));
  app.set('view engine', 'hbs');
  app.set('views', views);
  app.locals.assets = readClientAssets();
  app.locals.sessionTimeout = sessionTimeoutLocals(settings.idleMinutes);

  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'"],
          imgSrc: ["'self'", 'data:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
  );
  app.use(
    '/assets',
    express.static(`${CLIENT_DIST}/assets`, { immutable: true, maxAge: '365d', fallthrough: false }),
  );
  app.use(healthRoutes(services));
  app.use(requestLog);

  // Before the session, so that even a page answering a failed session load carries its token.
  app.use(csrf.tokens);
  app.use(
    session({
      store: createSessionStore(session, database.pool, { fastPath: sessionFastPath }),
      name: settings.cookieName,
      secret: settings.sessionSecret,
      resave: false,
      saveUninitialized: false,
      rolling: true,
      cookie: {
        httpOnly: true,
        sameSite: 'lax',
        secure: settings.cookieSecure,
        maxAge: settings.idleMinutes * 60_000,
      },
    }),
  );
  app.use(services.authenticator.initialize());
  app.use(services.authenticator.session());
  app.use(inboxCount(services));

  app.use(requireJsonBody);
  app.use(express.json({ limit: '100kb' }));
  app.use(express.urlencoded({ extended: false, limit: '100kb' }));
  // The public PDF check reads its multipart body first and then runs this same CSRF check itself.
  app.use(publicVerificationRoutes(services, csrf.protect));
  // Its upload form is multipart too: it reads the bounded body, then runs the same CSRF check.
  app.use(temperatureLogRoutes(services, csrf.protect));
  app.use(csrf.protect);

  app.use(authRoutes(services));
  app.use(sessionExtendRoutes(services));
  app.use(pageRoutes(services));
  app.use(accountRoutes(services));
  app.use(userAdminRoutes(services));
  app.use(settingsRoutes(services));
  app.use(apiRoutes(services));
  app.use(outboxRoutes(services));
  app.use(auditRoutes(services));
  app.use(analysisRoutes(services));
  app.use(reportRoutes(services));
  app.use(studyRoutes(services));
  app.use(retirementRoutes(services));
  app.use(uploadRoutes(services));
  app.use(reviewRoutes(services));
  app.use(verificationRoutes(services));
  app.use(inboxRoutes(services));
  app.use(templateAdminRoutes(services));

  app.use(notFound);
  app.use(errorHandler);
  return app;
}
