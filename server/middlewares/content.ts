import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { KeelsonApiError } from '../../shared/errors';

/**
 * Routes that take `multipart/form-data` (the CSV upload). Every other body-carrying API request
 * must be JSON. Paths are relative to /api/v1.
 */
export const MULTIPART_PATHS: ReadonlySet<string> = new Set(['/libraries/uploads']);

function hasBody(req: Request): boolean {
  if (req.headers['transfer-encoding'] !== undefined) return true;
  const len = req.headers['content-length'];
  return len !== undefined && len !== '0';
}

/** 415 for a POST/PUT/PATCH whose body is not JSON (multipart only where MULTIPART_PATHS allows it). */
export const requireJsonBody: RequestHandler = (req: Request, _res: Response, next: NextFunction) => {
  if (!['POST', 'PUT', 'PATCH'].includes(req.method) || !hasBody(req)) return next();
  if (req.is('application/json')) return next();
  if (req.is('multipart/form-data') && MULTIPART_PATHS.has(req.path)) return next();
  const got = req.headers['content-type'] ?? 'no content type';
  const want = MULTIPART_PATHS.has(req.path) ? 'send the file as multipart/form-data' : 'send JSON with Content-Type: application/json';
  return next(new KeelsonApiError('unsupported_media_type', `This route does not read ${got}: ${want}`));
};

/** API answers carry personal and unpublished data: no browser or proxy may keep a copy. */
export const noStore: RequestHandler = (_req: Request, res: Response, next: NextFunction) => {
  res.set('Cache-Control', 'no-store');
  next();
};
