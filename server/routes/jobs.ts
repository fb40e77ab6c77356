import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { idParam } from '../middlewares/params';
import { jobListQuerySchema, startCheckBodySchema } from '../../shared/jobs';
import { cancelJob, getJob, jobLimits, listJobs, restartJob, startCheck } from '../services/jobs';
import type { JobRunner } from '../jobs/runner';
import type { AppDeps } from '../app-deps';

const WRITERS = ['researcher', 'admin'] as const;


/**
 * Deep checks as background jobs: start on a finished run (researcher, admin), read and list
 * (every role, runs they can read), cancel and restart (researcher: own jobs; admin: any); the
 * server's per-mode limits (every signed-in role).
 */
export function registerJobRoutes(api: ApiRouter, deps: AppDeps, runner: JobRunner): void {
  const { db } = deps;

  api.post('/runs/:id/checks', WRITERS, (req: Request, res: Response) => {
    const runId = idParam(req, 'run id');
    const body = parseOr400(startCheckBodySchema, req.body, 'deep check request');
    res.status(201).json({ job: startCheck(db, runner, currentUser(req), runId, body) });
  });

  api.get('/jobs', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(jobListQuerySchema, req.query, 'job filter');
    res.json(listJobs(db, currentUser(req), q));
  });

  // before /jobs/:id: 'limits' is not a job id
  api.get('/jobs/limits', 'signed-in', (_req: Request, res: Response) => {
    res.json({ limits: jobLimits(runner) });
  });

  api.get('/jobs/:id', 'signed-in', (req: Request, res: Response) => {
    res.json({ job: getJob(db, currentUser(req), idParam(req, 'job id')) });
  });

  api.post('/jobs/:id/cancel', WRITERS, (req: Request, res: Response) => {
    res.json({ job: cancelJob(db, runner, currentUser(req), idParam(req, 'job id')) });
  });

  api.post('/jobs/:id/restart', WRITERS, (req: Request, res: Response) => {
    res.json({ job: restartJob(db, runner, currentUser(req), idParam(req, 'job id')) });
  });
}
