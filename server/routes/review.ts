import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { commentBodySchema, signoffBodySchema, signoffRequestBodySchema } from '../../shared/runs';
import { addComment, getReview, giveSignoff, listReviewers, requestSignoff, reviewQueue } from '../services/review';
import { idParam } from '../middlewares/params';
import type { AppDeps } from '../app-deps';

const REVIEWERS = ['reviewer', 'admin'] as const;

/**
 * Review: everyone who can read a run reads its comments and sign-offs; reviewers and admins
 * comment and sign off; the run's author (researcher or admin) requests a sign-off.
 */
export function registerReviewRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db, mailer } = deps;

  api.get('/review', 'signed-in', (req: Request, res: Response) => {
    res.json(reviewQueue(db, currentUser(req)));
  });

  api.get('/review/reviewers', ['researcher', 'admin'], (_req: Request, res: Response) => {
    res.json({ reviewers: listReviewers(db) });
  });

  api.get('/runs/:id/review', 'signed-in', (req: Request, res: Response) => {
    res.json({ review: getReview(db, currentUser(req), idParam(req, 'run id')) });
  });

  api.post('/runs/:id/comments', REVIEWERS, (req: Request, res: Response) => {
    const id = idParam(req, 'run id');
    const body = parseOr400(commentBodySchema, req.body, 'comment');
    res.status(201).json({ comment: addComment(db, currentUser(req), id, body.text) });
  });

  api.post('/runs/:id/signoff', REVIEWERS, (req: Request, res: Response) => {
    const id = idParam(req, 'run id');
    const body = parseOr400(signoffBodySchema, req.body, 'sign-off');
    res.status(201).json({ signoff: giveSignoff(db, mailer, currentUser(req), id, body, deps.publicUrl) });
  });

  api.post('/runs/:id/signoff-requests', ['researcher', 'admin'], (req: Request, res: Response) => {
    const id = idParam(req, 'run id');
    const body = parseOr400(signoffRequestBodySchema, req.body, 'sign-off request');
    res.status(201).json({ request: requestSignoff(db, mailer, currentUser(req), id, body, deps.publicUrl) });
  });
}
