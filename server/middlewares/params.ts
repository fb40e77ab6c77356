import type { Request } from 'express';
import { KeelsonApiError } from '../../shared/errors';

/** A path id: a positive whole number in plain decimal, no sign, no leading zero, no exponent or hex. */
const STRICT_ID = /^[1-9][0-9]{0,15}$/;

/**
 * The one parser of integer ids in API paths (`/runs/:id`, `/libraries/:id/editions/:n`, …).
 * Anything but a plain positive decimal (`1e3`, `0x10`, `01`, `-1`, `1.0`, ` 1`) names nothing,
 * so it is a 404 like any id that does not exist.
 */
export function parseId(raw: unknown, what = 'item'): number {
  const s = typeof raw === 'string' ? raw : String(raw ?? '');
  const n = Number(s);
  if (!STRICT_ID.test(s) || !Number.isSafeInteger(n)) {
    throw new KeelsonApiError('not_found', `No ${what} '${s.slice(0, 40)}': ids are positive whole numbers such as 12`);
  }
  return n;
}

/**
 * Reads the integer path parameter `param` (default `id`) of the request with `parseId`.
 * `what` names the thing in the 404 message ("run id" → "No run id '1e3'").
 */
export function idParam(req: Request, what = 'id', param = 'id'): number {
  return parseId(req.params[param], what);
}
