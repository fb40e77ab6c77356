/**
 * What every route module receives from createApp (server/app.ts). In its own module so the routes
 * do not import app.ts, which imports them.
 */
import type { Request, RequestHandler } from 'express';
import type passport from 'passport';
import type { Db } from './db/client';
import type { Mailer } from './services/mailer';

/** What every route module receives. */
export interface AppDeps {
  db: Db;
  mailer: Mailer;
  publicUrl?: string;
  uploadLimit: number;
  /** Sign-in limiters: per normalised e-mail (any IP) and per IP (any e-mail); failed attempts only. */
  loginLimiters: RequestHandler[];
  /** Password-change limiters: per user and per IP; wrong current passwords only. */
  passwordLimiters: RequestHandler[];
  /** This app's own passport instance (one per app, so tests can run several apps). */
  passport: passport.PassportStatic;
  /** The session's CSRF token; `rotate` replaces it (on sign-in, so a token seen before is worthless after). */
  generateCsrfToken: (req: Request, rotate?: boolean) => string;
}
