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
import { accountRoutes } from './auth/account-routes.js';
import { AccountService } from './auth/account-service.js';
import { defaultPasswordCost } from './auth/password.js';
import { threadPasswordHasher, type PasswordHasher } from './auth/password-hasher.js';
import { defaultLinkLimit, defaultResetRequestLimits, defaultSignInLimits, type AttemptLimit, type AttemptLimits } from './auth/sign-in-limit.js';
import { refusalAudit } from './audit/refusal-audit.js';
import type { Config } from './config.js';
import type { Db } from './db/client.js';
import { groupRoutes } from './groups/group-routes.js';
import { GroupService } from './groups/group-service.js';
import { apiNotFound, errorHandler } from './http/error-handler.js';
import { invitationRoutes } from './invitations/invitation-routes.js';
import { InvitationService } from './invitations/invitation-service.js';
import type { Mailer } from './mail/mailer.js';
import { outboxRoutes } from './mail/outbox-routes.js';
import { metaRoutes } from './openapi/meta-routes.js';
import { backupRoutes } from './backup/backup-routes.js';
import { catalogueRoutes } from './catalogue/catalogue-routes.js';
import { CatalogueService } from './catalogue/catalogue-service.js';
import type { ModeMapQueue } from './modemaps/mode-map-queue.js';
import { modeMapRoutes } from './modemaps/mode-map-routes.js';
import { ModeMapService } from './modemaps/mode-map-service.js';
import type { RunQueue } from './jobs/boss.js';
import { ComputePool, type Compute } from './compute/compute-pool.js';
import { modelRoutes } from './models/model-routes.js';
import { ModelService } from './models/model-service.js';
import type { RunEvents } from './runs/run-events.js';
import { runRoutes } from './runs/run-routes.js';
import { fitRoutes } from './fits/fit-routes.js';
import { FitService, type FitQueue } from './fits/fit-service.js';
import { RunService } from './runs/run-service.js';
import { fabricationFeature } from './fabrication/fabrication-feature.js';
import type { NotificationQueue } from './fabrication/notification-queue.js';
import type { StudyQueue } from './studies/study-queue.js';
import { studyRoutes } from './studies/study-routes.js';
import { StudyService } from './studies/study-service.js';

export interface AppDeps {
  db: Db;
  config: Config;
  mailer: Mailer;
  /** Where runs are queued for the workers (pg-boss in production). */
  queue: RunQueue;
  /** Where mode maps (scattering states, Husimi maps) are queued; without it they cannot be computed (503). */
  modeMapQueue?: ModeMapQueue;
  /** Where large peak fits are queued; without it every fit runs in a worker thread of the API. */
  fitQueue?: FitQueue | null;
  /** Where study steps are queued (one job per step); without it studies cannot be launched (503). */
  studyQueue?: StudyQueue | null;
  /** Live run progress for server-sent events; null falls back to polling the database. */
  runEvents?: RunEvents | null;
  /** Failed sign-ins per account and per IP (defaults in auth/sign-in-limit.ts); tests pass small ones. */
  signInLimits?: AttemptLimits;
  /** Password-reset requests per e-mail and per IP. */
  resetRequestLimits?: AttemptLimits;
  /** Failed uses of reset and invitation links per IP. */
  linkLimit?: AttemptLimit;
  /** bcrypt cost for new password hashes; tests pass 4 to stay fast. */
  passwordCost?: number;
  /** Where passwords are hashed (worker threads by default); tests count the calls. */
  passwords?: PasswordHasher;
  log?: (msg: string, err: unknown) => void;
  /** Where e-mail notifications are queued (pg-boss); null records them without sending. */
  notifications?: NotificationQueue | null;
  /** Runs geometry and estimates off the event loop; default a new pool (closed by closeApp). */
  compute?: Compute;
  /**
   * Mounts the other features' routers on the /api router (after authentication, before
   * the JSON 404), e.g. `api => api.use(modelRoutes(...))`.
   * Routes are mounted from their declarations in shared/api (server/http/mount-route.ts).
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

/** Stops what createApp started besides the routes (the compute pool's threads). */
export async function closeApp(app: Express): Promise<void> {
  await (app.locals.compute as Compute | undefined)?.close();
}

/** Builds the HTTP app from its dependencies; main.ts listens, tests use an ephemeral port. */
export function createApp(deps: AppDeps): Express {
  const { db, config, mailer } = deps;
  const log = deps.log ?? ((msg, err) => console.error(msg, err));
  const passwordCost = deps.passwordCost ?? defaultPasswordCost;
  const secureCookies = config.publicUrl.startsWith('https:');

  const passwords = deps.passwords ?? threadPasswordHasher;
  const linkLimit = deps.linkLimit ?? defaultLinkLimit;
  const auth = new AuthService({ db, mailer, publicUrl: config.publicUrl, passwordCost, passwords, log });
  const invitations = new InvitationService({ db, mailer, publicUrl: config.publicUrl, passwordCost, passwords });
  const groups = new GroupService(db);

  const app = express();
  app.set('trust proxy', config.trustProxy);
  // No ETag hashed over every answer body: API answers are no-store, so nothing revalidates
  // them, and the hash cost a catalogue page a tenth of its CPU. Routes whose answers are
  // revalidated set their own (mode images, the OpenAPI document); static files have theirs.
  app.set('etag', false);
  app.locals.db = db; // read by requireRole, which other features' routers also use
  const compute = deps.compute ?? new ComputePool({ threads: config.computeThreads, timeoutSeconds: config.computeTimeoutSeconds });
  app.locals.compute = compute;
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
  // API answers are per user and often secret (links, tokens): no cache keeps them. Routes
  // whose answers are public or versioned (the OpenAPI document, mode images) set their own.
  api.use((_req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  api.use(authenticate(db, config.jwtSecret));
  api.use(metaRoutes(config.version));
  api.use(
    authRoutes({
      db,
      auth,
      jwtSecret: config.jwtSecret,
      secureCookies,
      signInLimits: deps.signInLimits ?? defaultSignInLimits,
      resetRequestLimits: deps.resetRequestLimits ?? defaultResetRequestLimits,
      linkLimit,
      log,
    }),
  );
  api.use(invitationRoutes({ db, invitations, jwtSecret: config.jwtSecret, secureCookies, linkLimit }));
  // Fabrication: states, review, comments, packages, notification settings, catalogue import.
  fabricationFeature(api, { db, config, compute, notifications: deps.notifications ?? null });
  api.use(accountRoutes({ db, account: new AccountService({ db, passwordCost, passwords }), jwtSecret: config.jwtSecret, secureCookies }));
  api.use(groupRoutes({ db, groups, invitations }));
  api.use(modelRoutes(new ModelService(db, compute), compute));
  api.use(runRoutes(new RunService(db, deps.queue, compute, config.runLimits), deps.runEvents ?? null));
  api.use(backupRoutes({ db }));
  const catalogue = new CatalogueService(db);
  api.use(catalogueRoutes({ db, service: catalogue }));
  api.use(modeMapRoutes(new ModeMapService(db, deps.modeMapQueue ?? null)));
  api.use(fitRoutes(new FitService(db, deps.fitQueue ?? null), deps.runEvents ?? null));
  api.use(studyRoutes(new StudyService(db, deps.studyQueue ?? null, compute, new ModelService(db, compute), catalogue)));
  api.use(apiTokenRoutes(db));
  api.use(outboxRoutes(db, config.mailStandIn));
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

  app.use(errorHandler(log, refusalAudit(db, log)));
  return app;
}
