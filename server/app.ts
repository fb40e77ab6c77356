import express, { type Request, type Response } from 'express';
import session from 'express-session';
import helmet from 'helmet';
import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import { csrfSync } from 'csrf-sync';
import { existsSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';
import type { Db } from './db/client';
import type { Mailer } from './services/mailer';
import type { AppDeps } from './app-deps';
import { ApiRouter, type RouteSpec } from './middlewares/access';
import { errorHandler, notFoundApi } from './middlewares/errors';
import { noStore, requireJsonBody } from './middlewares/content';
import { idempotency } from './middlewares/idempotency';
import { guessLimiter, signInEmailKey } from './middlewares/rate-limit';
import { SqliteSessionStore } from './services/session-store';
import { findActiveUser, verifyCredentials } from './services/users';
import type { User } from '../shared/auth';
import { KEELSON_VERSION } from './version';
import { registerAuthRoutes } from './routes/auth';
import { registerAdminRoutes } from './routes/admin';
import { registerJobRoutes } from './routes/jobs';
import { JobRunner } from './jobs/runner';
import type { JobPool } from './jobs/pool';
import { RunEstimator } from './jobs/run-estimator';
import { registerSpecRoutes } from './routes/specs';
import { registerRunRoutes } from './routes/runs';
import { registerReviewRoutes } from './routes/review';
import { registerLibraryRoutes } from './routes/libraries';
import { registerEditionMetaRoutes } from './routes/edition-meta';
import { registerDocsRoutes } from './routes/docs';

export interface AppOptions {
  db: Db;
  mailer: Mailer;
  sessionSecret?: string;
  /** Folder of the Expo web export to serve; omitted in API tests. */
  webDist?: string;
  publicUrl?: string;
  /** Failed sign-in attempts allowed per e-mail address (normalised) in 15 minutes, from any IP (default 20). */
  loginLimit?: number;
  /** Failed sign-in attempts allowed per client IP in 15 minutes, across all e-mail addresses (default 100). */
  loginIpLimit?: number;
  /** Express `trust proxy` (default 'loopback': X-Forwarded-* is believed only from this host). */
  trustProxy?: boolean | number | string;
  /** Largest JSON body, in bytes. */
  jsonLimit?: number;
  /** Largest upload, in bytes. */
  uploadLimit?: number;
  /** Secure cookies (behind HTTPS; with a proxy, `trustProxy` must let Express see X-Forwarded-Proto). */
  secureCookies?: boolean;
  /** Worker pool for deep checks; created on the first job when absent. */
  jobPool?: JobPool;
  /** Mail a job's author when the job took longer than this (default 60 s). */
  jobMailAfterMs?: number;
  /** Queue mode (KEELSON_REDIS_URL): deep checks go to BullMQ workers over this Redis. */
  redisUrl?: string;
  /** Runs costing more than this (T·N²·K) are queued and answered 202 (KEELSON_HEAVY_RUN_COST; default 2·10⁷). */
  heavyRunCost?: number;
  /** Queue mode: how often a heavy run's job is polled (default 200 ms; its end is also noticed at once, QueueClient.pause). */
  runPollMs?: number;
  /** Queue mode: how often a deep check's flow is polled for progress (default 250 ms; its end is also noticed at once). */
  jobPollMs?: number;
}

export type { AppDeps };

export type KeelsonApp = express.Express & {
  routeTable: readonly RouteSpec[];
  close: () => void;
  /** Resolves when heavy runs and deep checks of this process have stopped (after close). */
  closed: () => Promise<void>;
  jobRunner: JobRunner;
  runEstimator: RunEstimator;
};

/** Deny by default: refuse to start if any API route was mounted without going through ApiRouter. */
function assertEveryRouteDeclaresAccess(api: ApiRouter): void {
  const stack = (api.router as unknown as { stack: { route?: { path: string } }[] }).stack;
  const mounted = stack.filter((l) => l.route).length;
  if (mounted !== api.routes.length) {
    throw new Error(`API has ${mounted} routes but only ${api.routes.length} declare their access`);
  }
}

export function createApp(opts: AppOptions): KeelsonApp {
  const { db, mailer } = opts;
  const app = express() as unknown as KeelsonApp;
  app.set('trust proxy', opts.trustProxy ?? 'loopback');
  app.disable('x-powered-by');
  // API answers are no-store, so no client revalidates them: skip hashing every body for an ETag
  // (static files keep serve-static's own ETags).
  app.set('etag', false);

  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          upgradeInsecureRequests: null,
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
  );

  const store = new SqliteSessionStore(db);
  app.use(
    session({
      name: 'keelson.sid',
      secret: opts.sessionSecret ?? randomBytes(32).toString('hex'),
      store,
      resave: false,
      saveUninitialized: false,
      rolling: true,
      cookie: { httpOnly: true, sameSite: 'lax', secure: opts.secureCookies ?? false, maxAge: 12 * 3600 * 1000 },
    }),
  );

  const pp = new passport.Passport() as passport.PassportStatic;
  pp.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, (email, password, done) => {
      verifyCredentials(db, email, password).then((u) => done(null, u ?? false), done);
    }),
  );
  pp.serializeUser((user, done) => done(null, (user as User).id));
  pp.deserializeUser((id: number, done) => {
    try {
      done(null, findActiveUser(db, id) ?? false);
    } catch (e) {
      done(e);
    }
  });
  app.use(pp.initialize());
  app.use(pp.session());

  const { csrfSynchronisedProtection, generateToken } = csrfSync({
    getTokenFromRequest: (req) => req.headers['x-csrf-token'] as string | undefined,
  });

  const loginEmailLimiter = guessLimiter({
    db,
    prefix: 'login-email:',
    limit: opts.loginLimit ?? 20,
    key: signInEmailKey,
    message: 'Too many failed sign-ins for this e-mail address; wait 15 minutes and try again',
  });
  const loginIpLimiter = guessLimiter({
    db,
    prefix: 'login-ip:',
    limit: opts.loginIpLimit ?? 100,
    message: 'Too many failed sign-ins from this address; wait 15 minutes and try again',
  });
  const wrongCurrentPassword = (res: Response) => res.statusCode === 403;
  const passwordUserLimiter = guessLimiter({
    db,
    prefix: 'password-user:',
    limit: opts.loginLimit ?? 20,
    key: (req) => String(req.user?.id ?? ''),
    failed: wrongCurrentPassword,
    message: 'Too many wrong current passwords; wait 15 minutes and try again',
  });
  const passwordIpLimiter = guessLimiter({
    db,
    prefix: 'password-ip:',
    limit: opts.loginIpLimit ?? 100,
    failed: wrongCurrentPassword,
    message: 'Too many wrong current passwords from this address; wait 15 minutes and try again',
  });
  const limiters = [loginEmailLimiter, loginIpLimiter, passwordUserLimiter, passwordIpLimiter];

  const deps: AppDeps = {
    db,
    mailer,
    publicUrl: opts.publicUrl,
    uploadLimit: opts.uploadLimit ?? 50 * 1024 * 1024,
    loginLimiters: [loginIpLimiter, loginEmailLimiter],
    passwordLimiters: [passwordIpLimiter, passwordUserLimiter],
    passport: pp,
    generateCsrfToken: (req, rotate) => generateToken(req, rotate ?? false),
  };

  const api = new ApiRouter();
  api.router.use(noStore);
  api.router.use(requireJsonBody);
  api.router.use(express.json({ limit: opts.jsonLimit ?? 1024 * 1024 }));
  api.router.use(csrfSynchronisedProtection);
  api.router.use(idempotency(db));
  api.get('/health', 'public', (_req: Request, res: Response) => {
    res.json({ status: 'ok', version: KEELSON_VERSION });
  });
  registerAuthRoutes(api, deps);
  registerAdminRoutes(api, deps);
  const jobRunner = new JobRunner({ db, mailer, publicUrl: opts.publicUrl, pool: opts.jobPool, mailAfterMs: opts.jobMailAfterMs, redisUrl: opts.redisUrl, pollMs: opts.jobPollMs });
  registerJobRoutes(api, deps, jobRunner);
  registerSpecRoutes(api, deps);
  const runEstimator = new RunEstimator({ db, mailer, jobs: jobRunner, publicUrl: opts.publicUrl, mailAfterMs: jobRunner.mailAfterMs, pollMs: opts.runPollMs });
  registerRunRoutes(api, deps, jobRunner, { launcher: runEstimator, heavyRunCost: opts.heavyRunCost });
  registerReviewRoutes(api, deps);
  registerLibraryRoutes(api, deps);
  registerEditionMetaRoutes(api, deps);
  registerDocsRoutes(api);
  api.router.use(notFoundApi);
  api.router.use(errorHandler);
  assertEveryRouteDeclaresAccess(api);

  app.use('/api/v1', api.router);
  app.use('/api', noStore, notFoundApi, errorHandler);

  if (opts.webDist && existsSync(join(opts.webDist, 'index.html'))) {
    const dist = opts.webDist;
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    app.get('/{*splat}', (_req, res) => res.sendFile(join(dist, 'index.html')));
  }
  app.use(errorHandler);

  app.routeTable = api.routes;
  app.jobRunner = jobRunner;
  app.runEstimator = runEstimator;
  // heavy runs stop first (their tasks use the job runner's pool or queue client), then the jobs
  let stopping: Promise<void> | null = null;
  app.close = () => {
    if (stopping) return;
    store.close();
    for (const l of limiters) l.store.shutdown();
    stopping = runEstimator.close().then(() => jobRunner.close());
  };
  app.closed = async () => {
    await stopping;
  };
  return app;
}
