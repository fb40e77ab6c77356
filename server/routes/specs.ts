import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseOr400 } from '../middlewares/errors';
import { idParam } from '../middlewares/params';
import { checkSpecBodySchema, copySpecBodySchema, createSpecBodySchema, specListQuerySchema, updateSpecBodySchema } from '../../shared/specs';
import { checkSpec, copySpec, createSpec, getSpec, listSpecs, setSpecArchived, updateSpec } from '../services/specs';
import type { AppDeps } from '../app-deps';

const WRITERS = ['researcher', 'admin'] as const;

/**
 * Model specs: list/read for every role, write for researchers and admins (edit, archive,
 * restore: author or admin).
 */
export function registerSpecRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db } = deps;

  api.get('/specs', 'signed-in', (req: Request, res: Response) => {
    const q = parseOr400(specListQuerySchema, req.query, 'spec filter');
    res.json({ specs: listSpecs(db, currentUser(req), { mine: q.mine === 'true', editionId: q.editionId, archived: q.archived === 'true' }) });
  });

  api.post('/specs/check', 'signed-in', (req: Request, res: Response) => {
    const body = parseOr400(checkSpecBodySchema, req.body, 'spec');
    res.json({ check: checkSpec(db, currentUser(req), body.editionId, body.spec) });
  });

  api.post('/specs', WRITERS, (req: Request, res: Response) => {
    const body = parseOr400(createSpecBodySchema, req.body, 'spec');
    res.status(201).json({ spec: createSpec(db, currentUser(req), body) });
  });

  api.get('/specs/:id', 'signed-in', (req: Request, res: Response) => {
    res.json({ spec: getSpec(db, currentUser(req), idParam(req, 'spec id')) });
  });

  api.put('/specs/:id', WRITERS, (req: Request, res: Response) => {
    const id = idParam(req, 'spec id');
    const body = parseOr400(updateSpecBodySchema, req.body, 'spec change');
    res.json({ spec: updateSpec(db, currentUser(req), id, body) });
  });

  api.post('/specs/:id/copy', WRITERS, (req: Request, res: Response) => {
    const id = idParam(req, 'spec id');
    const body = parseOr400(copySpecBodySchema, req.body ?? {}, 'copy');
    res.status(201).json({ spec: copySpec(db, currentUser(req), id, body.name) });
  });

  api.post('/specs/:id/archive', WRITERS, (req: Request, res: Response) => {
    res.json({ spec: setSpecArchived(db, currentUser(req), idParam(req, 'spec id'), true) });
  });

  api.post('/specs/:id/restore', WRITERS, (req: Request, res: Response) => {
    res.json({ spec: setSpecArchived(db, currentUser(req), idParam(req, 'spec id'), false) });
  });
}
