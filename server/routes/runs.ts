import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { compareQuerySchema, createRunBodySchema, runListQuerySchema } from '../../shared/runs';
import { createRun, getRun, getRunResultText, listRuns } from '../services/runs';
import { compareRuns } from '../services/runs-compare';
import { runCsv, runTex } from '../services/exports';
import { KeelsonApiError } from '../../shared/errors';
import { idParam } from './specs';
import type { AppDeps } from '../app';

const WRITERS = ['researcher', 'admin'] as const;

function finishedRun(req: Request, deps: AppDeps) {
  const run = getRun(deps.db, currentUser(req), idParam(req, 'run id'));
  if (run.status !== 'finished' || !run.result)
    throw new KeelsonApiError('conflict', `Run ${run.id} is ${run.status}; only finished runs can be exported${run.error ? ` (${run.error})` : ''}`);
  return run;
}

/**
 * Runs: start (researcher, admin), read, list, compare and export (every role; runs on private
 * libraries only for those who can read the library). No route changes a run once it exists.
 */
export function registerRunRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db, mailer } = deps;

  api.get('/runs', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(runListQuerySchema, req.query, 'run filter');
    res.json({ runs: listRuns(db, currentUser(req), q) });
  });

  api.post('/runs', WRITERS, (req: Request, res: Response) => {
    const body = parseOr400(createRunBodySchema, req.body, 'run request');
    const run = createRun(db, mailer, currentUser(req), body, deps.publicUrl);
    res.status(201).json({ run });
  });

  // Registered before /runs/:id so that "compare" is not read as an id.
  api.get('/runs/compare', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(compareQuerySchema, req.query, 'compare request');
    res.json(compareRuns(db, currentUser(req), q.a, q.b));
  });

  api.get('/runs/:id', 'signed-in', (req: Request, res: Response) => {
    res.json({ run: getRun(db, currentUser(req), idParam(req, 'run id')) });
  });

  api.get('/runs/:id/result.json', 'signed-in', (req: Request, res: Response) => {
    const id = idParam(req, 'run id');
    const text = getRunResultText(db, currentUser(req), id);
    res.type('application/json').set('content-disposition', `attachment; filename="keelson-run-${id}.json"`).send(text);
  });

  api.get('/runs/:id/export.csv', 'signed-in', (req: Request, res: Response) => {
    const run = finishedRun(req, deps);
    res.type('text/csv; charset=utf-8').set('content-disposition', `attachment; filename="keelson-run-${run.id}.csv"`).send(runCsv(run));
  });

  api.get('/runs/:id/export.tex', 'signed-in', (req: Request, res: Response) => {
    const run = finishedRun(req, deps);
    res.type('application/x-tex; charset=utf-8').set('content-disposition', `attachment; filename="keelson-run-${run.id}.tex"`).send(runTex(run));
  });
}
