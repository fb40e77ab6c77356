import express, { type Request, type RequestHandler, type Response } from 'express';
import session from 'express-session';
import helmet from 'helmet';
import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { csrfSync } from 'csrf-sync';
import { existsSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';
import type { Db } from './db/client';
import type { Mailer } from './services/mailer';
import { ApiRouter, type RouteSpec } from './middlewares/access';
import { errorHandler, notFoundApi } from './middlewares/errors';
import { SqliteSessionStore } from './services/session-store';
import { findActiveUser, verifyCredentials } from './services/users';
import { KeelsonApiError } from '../shared/errors';
import type { User } from '../shared/auth';
import { KEELSON_VERSION } from './version';
import { registerAuthRoutes } from './routes/auth';
import { registerAdminRoutes } from './routes/admin';
import { registerJobRoutes } from './routes/jobs';
import { JobRunner } from './jobs/runner';
import type { JobPool } from './jobs/pool';
import { registerSpecRoutes } from './routes/specs';
import { registerRunRoutes } from './routes/runs';
import { registerReviewRoutes } from './routes/review';
import { registerLibraryRoutes } from './routes/libraries';

export interface AppOptions {
  db: Db;
  mailer: Mailer;
  sessionSecret?: string;
  /** Folder of the Expo web export to serve; omitted in API tests. */
  webDist?: string;
  publicUrl?: string;
  /** Sign-in attempts allowed per IP and e-mail in 15 minutes. */
  loginLimit?: number;
  /** Largest JSON body, in bytes. */
  jsonLimit?: number;
  /** Largest upload, in bytes. */
  uploadLimit?: number;
  /** Secure cookies (behind HTTPS). */
  secureCookies?: boolean;
  /** Worker pool for deep checks; created on the first job when absent. */
  jobPool?: JobPool;
  /** Mail a job's author when the job took longer than this (default 60 s). */
  jobMailAfterMs?: number;
}

/** What every route module receives. */
export interface AppDeps {
  db: Db;
  mailer: Mailer;
  publicUrl?: string;
  uploadLimit: number;
  loginLimiter: RequestHandler;
  /** This app's own passport instance (one per app, so tests can run several apps). */
  passport: passport.PassportStatic;
  generateCsrfToken: (req: Request) => string;
}

export type KeelsonApp = express.Express & { routeTable: readonly RouteSpec[]; close: () => void; jobRunner: JobRunner };

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
  app.set('trust proxy', 'loopback');
  app.disable('x-powered-by');

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

  const loginLimiter = rateLimit({
    windowMs: 15 * 60 * 1000,
    limit: opts.loginLimit ?? 20,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    skipSuccessfulRequests: true,
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${String((req.body as { email?: unknown } | undefined)?.email ?? '').toLowerCase()}`,
    handler: (_req, _res, next) =>
      next(new KeelsonApiError('rate_limited', 'Too many sign-in attempts; wait 15 minutes and try again')),
  });

  const deps: AppDeps = {
    db,
    mailer,
    publicUrl: opts.publicUrl,
    uploadLimit: opts.uploadLimit ?? 50 * 1024 * 1024,
    loginLimiter,
    passport: pp,
    generateCsrfToken: (req) => generateToken(req),
  };

  const api = new ApiRouter();
  api.router.use(express.json({ limit: opts.jsonLimit ?? 1024 * 1024 }));
  api.router.use(csrfSynchronisedProtection);
  api.get('/health', 'public', (_req: Request, res: Response) => {
    res.json({ status: 'ok', version: KEELSON_VERSION });
  });
  registerAuthRoutes(api, deps);
  registerAdminRoutes(api, deps);
  const jobRunner = new JobRunner({ db, mailer, publicUrl: opts.publicUrl, pool: opts.jobPool, mailAfterMs: opts.jobMailAfterMs });
  registerJobRoutes(api, deps, jobRunner);
  registerSpecRoutes(api, deps);
  registerRunRoutes(api, deps);
  registerReviewRoutes(api, deps);
  registerLibraryRoutes(api, deps);
  api.router.use(notFoundApi);
  api.router.use(errorHandler);
  assertEveryRouteDeclaresAccess(api);

  app.use('/api/v1', api.router);
  app.use('/api', notFoundApi, errorHandler);

  if (opts.webDist && existsSync(join(opts.webDist, 'index.html'))) {
    const dist = opts.webDist;
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    app.get('/{*splat}', (_req, res) => res.sendFile(join(dist, 'index.html')));
  }
  app.use(errorHandler);

  app.routeTable = api.routes;
  app.jobRunner = jobRunner;
  app.close = () => {
    store.close();
    void jobRunner.close();
  };
  return app;
}
