import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Request, Response } from 'express';
import type { ApiRouter } from '../middlewares/access';

/** The repository's statistics page (docs/methods.md), read once at start-up. */
export const METHODS_PATH = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'docs', 'methods.md');

/**
 * Documentation: the methods page, read-only, for every signed-in role (text/markdown). The app's
 * Methods screen renders it; nothing is fetched from anywhere else.
 */
export function registerDocsRoutes(api: ApiRouter): void {
  const methods = readFileSync(METHODS_PATH, 'utf8');
  api.get('/docs/methods', 'signed-in', (_req: Request, res: Response) => {
    res.type('text/markdown; charset=utf-8').set('cache-control', 'private, max-age=300').send(methods);
  });
}
