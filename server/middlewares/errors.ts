import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError, type ZodType } from 'zod';
import { KeelsonApiError, type ErrorIssue } from '../../shared/errors';

export function zodIssues(err: ZodError): ErrorIssue[] {
  return err.issues.map((i) => ({
    path: i.path.map((p) => (typeof p === 'number' ? p : String(p))),
    message: i.message,
  }));
}

/** Parses `data` with `schema` or throws a 400 `validation_failed` envelope naming each field. */
export function parseOr400<T>(schema: ZodType<T>, data: unknown, what = 'request'): T {
  const r = schema.safeParse(data);
  if (!r.success) {
    const issues = zodIssues(r.error);
    const first = issues[0];
    const where = first && first.path.length ? ` (${first.path.join('.')})` : '';
    throw new KeelsonApiError('validation_failed', `The ${what} is not valid: ${first?.message ?? 'check the fields'}${where}`, issues);
  }
  return r.data;
}

export const notFoundApi: RequestHandler = (req, _res, next) => {
  next(new KeelsonApiError('not_found', `No API route ${req.method} ${req.originalUrl}`));
};

interface HttpishError {
  type?: string;
  status?: number;
  statusCode?: number;
  code?: string;
  message?: string;
}

/** Turns every error into the one envelope. Nothing here throws. */
export const errorHandler: ErrorRequestHandler = (err: unknown, _req, res, next) => {
  if (res.headersSent) {
    next(err);
    return;
  }
  let apiErr: KeelsonApiError;
  if (err instanceof KeelsonApiError) apiErr = err;
  else if (err instanceof ZodError) apiErr = new KeelsonApiError('validation_failed', 'The request is not valid', zodIssues(err));
  else {
    const e = (err ?? {}) as HttpishError;
    if (e.type === 'entity.too.large' || e.code === 'LIMIT_FILE_SIZE') {
      apiErr = new KeelsonApiError('payload_too_large', 'The request body is larger than this server accepts');
    } else if (e.type === 'entity.parse.failed') {
      apiErr = new KeelsonApiError('bad_request', 'The request body is not valid JSON');
    } else if (e.code === 'EBADCSRFTOKEN' || (e.message ?? '').toLowerCase().includes('csrf')) {
      apiErr = new KeelsonApiError('csrf_invalid', 'Missing or stale CSRF token: fetch /api/v1/auth/csrf and send it in the x-csrf-token header');
    } else if (typeof e.code === 'string' && e.code.startsWith('LIMIT_')) {
      apiErr = new KeelsonApiError('bad_request', `Upload refused: ${e.message ?? e.code}`);
    } else if ((e.status ?? e.statusCode ?? 500) < 500) {
      const status = e.status ?? e.statusCode ?? 400;
      apiErr = new KeelsonApiError(status === 413 ? 'payload_too_large' : 'bad_request', e.message ?? 'Bad request', undefined, status);
    } else {
      console.error('[keelson] unexpected error', err);
      apiErr = new KeelsonApiError('internal', 'Something went wrong on the server; nothing was saved');
    }
  }
  res.status(apiErr.status).json(apiErr.toEnvelope());
};
