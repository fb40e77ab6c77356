import type { NextFunction, Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { acceptInviteBodySchema, changePasswordBodySchema, loginBodySchema, normaliseEmail, type User } from '../../shared/auth';
import { KeelsonApiError } from '../../shared/errors';
import { acceptInvitation, changePassword, markLogin, previewInvitation } from '../services/users';
import { audit } from '../services/audit';
import { listOutbox } from '../services/mail';
import type { AppDeps } from '../app-deps';

function logIn(req: Request, user: User): Promise<void> {
  // A new session id on sign-in (passport regenerates the session); the CSRF token is rotated by the caller.
  return new Promise((resolve, reject) => req.logIn(user, { session: true, keepSessionInfo: true }, (err) => (err ? reject(err) : resolve())));
}

export function registerAuthRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db, generateCsrfToken } = deps;

  api.get('/auth/csrf', 'public', (req: Request, res: Response) => {
    res.json({ token: generateCsrfToken(req) });
  });

  api.post('/auth/login', 'public', ...deps.loginLimiters, (req: Request, res: Response, next: NextFunction) => {
    parseOr400(loginBodySchema, req.body, 'sign-in form');
    deps.passport.authenticate('local', { session: false }, (err: unknown, user: User | false) => {
      if (err) return next(err);
      if (!user) {
        audit(db, null, 'auth.login_failed', { email: normaliseEmail(String((req.body as { email?: unknown }).email ?? '')) });
        return next(new KeelsonApiError('unauthenticated', 'E-mail or password is wrong, or the account is deactivated'));
      }
      logIn(req, user)
        .then(() => {
          markLogin(db, user.id);
          // A token known before sign-in is worthless after it: send the new one.
          res.json({ user, csrfToken: generateCsrfToken(req, true) });
        })
        .catch(next);
    })(req, res, next);
  });

  api.post('/auth/logout', 'public', (req: Request, res: Response, next: NextFunction) => {
    const userId = req.user?.id ?? null;
    req.logOut((err) => {
      if (err) return next(err);
      if (userId) audit(db, userId, 'auth.logout');
      req.session.destroy(() => {
        res.clearCookie('keelson.sid');
        res.status(204).end();
      });
    });
  });

  // Public on purpose: a signed-out visitor is an expected answer (200 { user: null }), not an error,
  // so a browser does not log a failed request on every signed-out page load.
  api.get('/auth/me', 'public', (req: Request, res: Response) => {
    res.json({ user: req.user ?? null });
  });

  api.get('/auth/outbox', 'signed-in', (req: Request, res: Response) => {
    res.json({ messages: listOutbox(db, { to: currentUser(req).email }) });
  });

  api.get('/invitations/:token', 'public', (req: Request, res: Response) => {
    res.json({ invitation: previewInvitation(db, String(req.params.token)) });
  });

  api.post('/invitations/accept', 'public', async (req: Request, res: Response) => {
    const body = parseOr400(acceptInviteBodySchema, req.body, 'invitation form');
    const user = await acceptInvitation(db, body.token, body.password);
    await logIn(req, user);
    markLogin(db, user.id);
    res.status(201).json({ user, csrfToken: generateCsrfToken(req, true) });
  });

  // Wrong current passwords count like failed sign-ins (per user and per IP); other sessions of the user end.
  api.post('/auth/password', 'signed-in', ...deps.passwordLimiters, async (req: Request, res: Response) => {
    const body = parseOr400(changePasswordBodySchema, req.body, 'password change');
    await changePassword(db, currentUser(req), body.currentPassword, body.newPassword, req.sessionID);
    res.status(204).end();
  });
}
