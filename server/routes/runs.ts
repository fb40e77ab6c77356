import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { changeBasisBodySchema, compareQuerySchema, createRunBodySchema, runListQuerySchema } from '../../shared/runs';
import { cancelRun, changeRunBasis, createRun, firstStageCopy, getRun, getRunJson, getRunResultText, listRuns, type RunDeps } from '../services/runs';
import type { JobRunner } from '../jobs/runner';
import type { Run } from '../../shared/runs';
import { compareRuns } from '../services/runs-compare';
import { exportContextFor, runCsv, runTex } from '../services/exports';
import { compareCsv, compareTex } from '../services/compare-exports';
import { KeelsonApiError } from '../../shared/errors';
import { idParam } from '../middlewares/params';
import type { AppDeps } from '../app-deps';

const WRITERS = ['researcher', 'admin'] as const;

function finishedRun(req: Request, deps: AppDeps) {
  const run = getRun(deps.db, currentUser(req), idParam(req, 'run id'));
  if (run.status !== 'finished' || !run.result)
    throw new KeelsonApiError('conflict', `Run ${run.id} is ${run.status}; only finished runs can be exported${run.error ? ` (${run.error})` : ''}`);
  return run;
}

/**
 * Runs: start (researcher, admin), read, list, compare and export (every role; runs on private
 * libraries only for those who can read the library). No route changes a run's result once it
 * exists: another basis or a first-stage copy is a new run (researcher: of their own runs; admin:
 * any). A queued or running (heavy) run may be cancelled by its author or an admin.
 * The runner starts the bootstrap deep check of a spec that asks for bootstrap p-values; its
 * mail threshold (one minute by default) also decides whether a run's end is mailed.
 * A run whose cost T·N²·K is above `heavy.heavyRunCost` is answered 202 `queued` with a Location
 * header and estimated by `heavy.launcher` (server/jobs/run-estimator.ts); smaller ones keep 201.
 */
export function registerRunRoutes(api: ApiRouter, deps: AppDeps, runner: JobRunner, heavy: Pick<RunDeps, 'launcher' | 'heavyRunCost'> = {}): void {
  const { db } = deps;
  const runDeps: RunDeps = { db, mailer: deps.mailer, runner, publicUrl: deps.publicUrl, mailAfterMs: runner.mailAfterMs, ...heavy };
  /** 201 with the run estimated; 202 with a Location to poll when it was queued (heavy). */
  const created = (res: Response, run: Run, body: object) => {
    if (run.status === 'queued') res.status(202).location(`/api/v1/runs/${run.id}`);
    else res.status(201);
    res.json(body);
  };

  api.get('/runs', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(runListQuerySchema, req.query, 'run filter');
    res.json(listRuns(db, currentUser(req), q));
  });

  api.post('/runs', WRITERS, (req: Request, res: Response) => {
    const body = parseOr400(createRunBodySchema, req.body, 'run request');
    const run = createRun(runDeps, currentUser(req), body);
    created(res, run, { run });
  });

  api.post('/runs/:id/basis', WRITERS, (req: Request, res: Response) => {
    const id = idParam(req, 'run id');
    const body = parseOr400(changeBasisBodySchema, req.body, 'basis change');
    const run = changeRunBasis(runDeps, currentUser(req), id, body);
    created(res, run, { run });
  });

  api.post('/runs/:id/first-stage-copy', WRITERS, (req: Request, res: Response) => {
    const out = firstStageCopy(runDeps, currentUser(req), idParam(req, 'run id'));
    created(res, out.run, out);
  });

  api.post('/runs/:id/cancel', WRITERS, (req: Request, res: Response) => {
    res.json({ run: cancelRun(runDeps, currentUser(req), idParam(req, 'run id')) });
  });

  // Registered before /runs/:id so that "compare" is not read as an id.
  api.get('/runs/compare', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(compareQuerySchema, req.query, 'compare request');
    res.json(compareRuns(db, currentUser(req), q.a, q.b, q.require));
  });

  api.get('/runs/compare/export.csv', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(compareQuerySchema, req.query, 'compare request');
    const c = compareRuns(db, currentUser(req), q.a, q.b, q.require);
    res
      .type('text/csv; charset=utf-8')
      .set('content-disposition', `attachment; filename="keelson-compare-${q.a}-${q.b}.csv"`)
      .send(compareCsv(c, exportContextFor(db, c.a.editionId)));
  });

  api.get('/runs/compare/export.tex', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(compareQuerySchema, req.query, 'compare request');
    const c = compareRuns(db, currentUser(req), q.a, q.b, q.require);
    res
      .type('application/x-tex; charset=utf-8')
      .set('content-disposition', `attachment; filename="keelson-compare-${q.a}-${q.b}.tex"`)
      .send(compareTex(c, exportContextFor(db, c.a.editionId)));
  });

  api.get('/runs/:id', 'signed-in', (req: Request, res: Response) => {
    res.type('application/json').send(getRunJson(db, currentUser(req), idParam(req, 'run id')));
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
