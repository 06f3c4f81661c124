import { createHash } from 'node:crypto';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import cookieParser from 'cookie-parser';
import express, { type Express, type Router } from 'express';
import helmet from 'helmet';
import { apiTokenRoutes } from './auth/api-token-routes.js';
import { authRoutes } from './auth/auth-routes.js';
import { AuthService } from './auth/auth-service.js';
import { authenticate } from './auth/authenticate.js';
import { defaultPasswordCost } from './auth/password.js';
import { defaultSignInLimit, type AttemptLimit } from './auth/sign-in-limit.js';
import type { Config } from './config.js';
import type { Db } from './db/client.js';
import { groupRoutes } from './groups/group-routes.js';
import { GroupService } from './groups/group-service.js';
import { apiNotFound, errorHandler } from './http/error-handler.js';
import { invitationRoutes } from './invitations/invitation-routes.js';
import { InvitationService } from './invitations/invitation-service.js';
import type { Mailer } from './mail/mailer.js';
import { outboxRoutes } from './mail/outbox-routes.js';
import { openApiRoute } from './openapi/openapi-route.js';
import { catalogueRoutes } from './catalogue/catalogue-routes.js';
import type { RunQueue } from './jobs/boss.js';
import { modelRoutes } from './models/model-routes.js';
import { ModelService } from './models/model-service.js';
import type { RunEvents } from './runs/run-events.js';
import { runRoutes } from './runs/run-routes.js';
import { fitRoutes } from './fits/fit-routes.js';
import { FitService, type FitQueue } from './fits/fit-service.js';
import { RunService } from './runs/run-service.js';

export interface AppDeps {
  db: Db;
  config: Config;
  mailer: Mailer;
  /** Where runs are queued for the workers (pg-boss in production). */
  queue: RunQueue;
  /** Where large peak fits are queued; without it every fit runs in a worker thread of the API. */
  fitQueue?: FitQueue | null;
  /** Live run progress for server-sent events; null falls back to polling the database. */
  runEvents?: RunEvents | null;
  /** Sign-in attempts per window (default 10 per 15 min); tests pass a small one. */
  signInLimit?: AttemptLimit;
  /** Password-reset requests per window, same default. */
  resetLimit?: AttemptLimit;
  /** bcrypt cost for new password hashes; tests pass 4 to stay fast. */
  passwordCost?: number;
  log?: (msg: string, err: unknown) => void;
  /**
   * Mounts the other features' routers on the /api router (after authentication, before
   * the JSON 404), e.g. `api => api.use('/groups/:groupId/models', modelRoutes(...))`.
   * Their routers use requireRole(), which scopes every request to the caller's group.
   */
  mountFeatures?: (api: Router) => void;
}

/** JSON bodies up to 1 MB: cavity models with bitmap masks fit; uploads go through multer instead. */
const jsonLimit = '1mb';

/**
 * Angular's critical-CSS inliner loads the stylesheet with `onload="this.media='all'"`;
 * helmet's default script-src-attr 'none' blocks it. Allowing exactly that handler by
 * hash keeps inline scripts forbidden otherwise.
 */
const stylesheetOnloadHash = `'sha256-${createHash('sha256').update("this.media='all'").digest('base64')}'`;

/** Builds the HTTP app from its dependencies; main.ts listens, tests use an ephemeral port. */
export function createApp(deps: AppDeps): Express {
  const { db, config, mailer } = deps;
  const log = deps.log ?? ((msg, err) => console.error(msg, err));
  const passwordCost = deps.passwordCost ?? defaultPasswordCost;
  const secureCookies = config.publicUrl.startsWith('https:');

  const auth = new AuthService({ db, mailer, publicUrl: config.publicUrl, passwordCost, log });
  const invitations = new InvitationService({ db, mailer, publicUrl: config.publicUrl, passwordCost });
  const groups = new GroupService(db);

  const app = express();
  app.locals.db = db; // read by requireRole, which other features' routers also use
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'script-src-attr': ["'unsafe-hashes'", stylesheetOnloadHash],
          'img-src': ["'self'", 'data:', 'blob:'],
          // Served over plain http on 127.0.0.1 by default; upgrading would break it.
          'upgrade-insecure-requests': null,
        },
      },
      strictTransportSecurity: secureCookies,
    }),
  );
  app.use(express.json({ limit: jsonLimit }));
  app.use(cookieParser());

  const api = express.Router();
  api.use(authenticate(db, config.jwtSecret));
  api.get('/health', (_req, res) => {
    res.json({ ok: true, version: config.version });
  });
  api.get('/openapi.json', openApiRoute(config.version));
  api.use(
    '/auth',
    authRoutes({
      db,
      auth,
      jwtSecret: config.jwtSecret,
      secureCookies,
      signInLimit: deps.signInLimit ?? defaultSignInLimit,
      resetLimit: deps.resetLimit ?? defaultSignInLimit,
    }),
  );
  api.use('/invitations', invitationRoutes({ db, invitations, jwtSecret: config.jwtSecret, secureCookies }));
  api.use('/groups', groupRoutes({ db, groups, invitations }));
  api.use('/groups/:groupId/models', modelRoutes(new ModelService(db)));
  api.use('/groups/:groupId/runs', runRoutes(new RunService(db, deps.queue), deps.runEvents ?? null));
  api.use('/groups/:groupId', catalogueRoutes({ db }));
  api.use('/groups/:groupId', fitRoutes(new FitService(db, deps.fitQueue ?? null)));
  api.use('/tokens', apiTokenRoutes(db));
  api.use('/outbox', outboxRoutes(db, config.mailStandIn));
  deps.mountFeatures?.(api);
  api.use(apiNotFound);
  app.use('/api', api);

  // The built Angular client, with the SPA fallback so deep links load index.html.
  app.use(express.static(config.clientDir, { index: false, maxAge: '1h' }));
  app.get('/{*splat}', (_req, res) => {
    const index = join(config.clientDir, 'index.html');
    if (!existsSync(index)) {
      res.status(404).type('text/plain').send('The web client is not built yet: run `npm run build`.');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(index);
  });

  app.use(errorHandler(log));
  return app;
}
