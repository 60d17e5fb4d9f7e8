import connectPgSimple from 'connect-pg-simple';
import express, { type Express } from 'express';
import session from 'express-session';
import helmet from 'helmet';
import { csrfProtection } from './auth/csrf.ts';
import { createAuthenticator } from './auth/passport-setup.ts';
import type { DatabaseHandle } from './db/client.ts';
import { errorHandler, notFound } from './http/error-handler.ts';
import { requireJsonBody } from './http/require-json.ts';
import { accountRoutes } from './routes/account-routes.ts';
import { analysisRoutes } from './routes/analysis-routes.ts';
import { apiRoutes } from './routes/api-routes.ts';
import { auditRoutes } from './routes/audit-routes.ts';
import { authRoutes } from './routes/auth-routes.ts';
import { healthRoutes } from './routes/health-routes.ts';
import { outboxRoutes } from './routes/outbox-routes.ts';
import { pageRoutes } from './routes/page-routes.ts';
import { reportRoutes } from './routes/report-routes.ts';
import { reviewRoutes } from './routes/review-routes.ts';
import { settingsRoutes } from './routes/settings-routes.ts';
import { studyRoutes } from './routes/study-routes.ts';
import { templateAdminRoutes } from './routes/template-admin-routes.ts';
import { uploadRoutes } from './routes/upload-routes.ts';
import { userAdminRoutes } from './routes/user-admin-routes.ts';
import { verificationRoutes } from './routes/verification-routes.ts';
import type { AppOptions, AppServices } from './services/app-services.ts';
import { CLIENT_DIST, readClientAssets } from './web/assets.ts';
import { createViewEngine, VIEWS_DIR } from './web/view-engine.ts';

export const DEFAULT_OPTIONS: Omit<AppOptions, 'sessionSecret'> = {
  cookieSecure: false,
  cookieName: 'rateledger.sid',
  signInRateLimit: 20,
  rateLimitPrefix: '',
  idleMinutes: 30,
};

/**
 * Builds the Express app. No state lives in process memory: sessions, rate-limit counters and
 * everything else are in PostgreSQL, so several instances can serve behind a load balancer.
 */
export function createApp(
  database: DatabaseHandle,
  options: Partial<AppOptions> & { sessionSecret: string },
): Express {
  const settings: AppOptions = { ...DEFAULT_OPTIONS, ...options };
  const services: AppServices = { db: database.db, pool: database.pool, options: settings };
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.engine('hbs', createViewEngine());
  app.set('view engine', 'hbs');
  app.set('views', VIEWS_DIR);
  app.locals.assets = readClientAssets();

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

  const PgStore = connectPgSimple(session);
  app.use(
    session({
      store: new PgStore({ pool: database.pool, tableName: 'session', createTableIfMissing: false }),
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
  const authenticator = createAuthenticator(database.db);
  app.use(authenticator.initialize());
  app.use(authenticator.session());

  app.use(requireJsonBody);
  app.use(express.json({ limit: '100kb' }));
  app.use(express.urlencoded({ extended: false, limit: '100kb' }));
  app.use(csrfProtection);

  app.use(authRoutes(services));
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
  app.use(uploadRoutes(services));
  app.use(reviewRoutes(services));
  app.use(verificationRoutes(services));
  app.use(templateAdminRoutes(services));

  app.use(notFound);
  app.use(errorHandler);
  return app;
}
