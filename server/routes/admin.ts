import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { idParam } from '../middlewares/params';
import { inviteBodySchema, updateUserBodySchema } from '../../shared/auth';
import { ROLE_LABELS } from '../../shared/roles';
import { auditPageQuerySchema } from '../../shared/audit';
import { createInvitation, listInvitations, listUsers, updateUser } from '../services/users';
import { listOutbox, sendMail } from '../services/mail';
import { listAudit } from '../services/audit';
import type { AppDeps } from '../app-deps';

export function registerAdminRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db, mailer } = deps;
  const admin = ['admin'] as const;

  api.get('/admin/users', admin, (_req: Request, res: Response) => {
    res.json({ users: listUsers(db) });
  });

  api.patch('/admin/users/:id', admin, (req: Request, res: Response) => {
    const id = idParam(req, 'user id');
    const patch = parseOr400(updateUserBodySchema, req.body, 'user change');
    res.json({ user: updateUser(db, currentUser(req), id, patch) });
  });

  api.get('/admin/invitations', admin, (_req: Request, res: Response) => {
    res.json({ invitations: listInvitations(db) });
  });

  api.post('/admin/invitations', admin, async (req: Request, res: Response) => {
    const me = currentUser(req);
    const body = parseOr400(inviteBodySchema, req.body, 'invitation');
    const { invitation, token } = createInvitation(db, me, body);
    const base = deps.publicUrl ?? `${req.protocol}://${req.get('host') ?? 'localhost'}`;
    const link = `${base}/accept-invite?token=${token}`;
    await sendMail(db, mailer, {
      to: invitation.email,
      subject: `You are invited to Keelson as ${ROLE_LABELS[invitation.role]}`,
      text:
        `${me.name} invited you to Keelson as ${ROLE_LABELS[invitation.role]}.\n\n` +
        `Set your password here (the link works once, until ${invitation.expiresAt.slice(0, 10)}):\n${link}\n`,
    });
    res.status(201).json({ invitation });
  });

  api.get('/admin/outbox', admin, (_req: Request, res: Response) => {
    res.json({ messages: listOutbox(db) });
  });

  api.get('/admin/audit', admin, (req: Request, res: Response) => {
    res.json(listAudit(db, parseOr400(auditPageQuerySchema, req.query, 'audit log query')));
  });
}
