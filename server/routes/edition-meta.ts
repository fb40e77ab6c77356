import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';
import { currentUser } from '../middlewares/access';
import { parseId } from '../middlewares/params';
import { getEditionMeta } from '../services/edition-meta';
import type { AppDeps } from '../app';

/** `GET /libraries/:id/editions/:n/meta`: an edition's series and dates without values (see shared/edition-meta.ts). */
export function registerEditionMetaRoutes(api: ApiRouter, deps: AppDeps): void {
  const { db } = deps;
  api.get('/libraries/:id/editions/:n/meta', 'signed-in', (req: Request, res: Response) => {
    res.json({ meta: getEditionMeta(db, currentUser(req), parseId(req.params.id, 'library'), parseId(req.params.n, 'edition')) });
  });
}
