import { z } from 'zod';

/**
 * The one error envelope of the Keelson API: `{ error: { code, message, issues? } }`.
 * `issues` carries field-level problems (zod issues, or CSV row/column findings).
 */
export const ERROR_CODES = [
  'bad_request',
  'validation_failed',
  'unauthenticated',
  'forbidden',
  'not_found',
  'conflict',
  'payload_too_large',
  'unsupported_media_type',
  'rate_limited',
  'csrf_invalid',
  'unprocessable',
  'internal',
] as const;
export const errorCodeSchema = z.enum(ERROR_CODES);
export type ErrorCode = z.infer<typeof errorCodeSchema>;

export const errorIssueSchema = z.object({
  path: z.array(z.union([z.string(), z.number()])).default([]),
  message: z.string(),
  row: z.number().int().optional(),
  column: z.string().optional(),
});
export type ErrorIssue = z.infer<typeof errorIssueSchema>;

export const errorEnvelopeSchema = z.object({
  error: z.object({
    code: errorCodeSchema,
    message: z.string(),
    issues: z.array(errorIssueSchema).optional(),
  }),
});
export type ErrorEnvelope = z.infer<typeof errorEnvelopeSchema>;

export const STATUS_OF_CODE: Readonly<Record<ErrorCode, number>> = {
  bad_request: 400,
  validation_failed: 400,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  payload_too_large: 413,
  unsupported_media_type: 415,
  rate_limited: 429,
  csrf_invalid: 403,
  unprocessable: 422,
  internal: 500,
};

/** Error carried through services to the HTTP layer and, on the client, out of `api/client.ts`. */
export class KeelsonApiError extends Error {
  readonly code: ErrorCode;
  readonly status: number;
  readonly issues?: ErrorIssue[];
  constructor(code: ErrorCode, message: string, issues?: ErrorIssue[], status?: number) {
    super(message);
    this.name = 'KeelsonApiError';
    this.code = code;
    this.status = status ?? STATUS_OF_CODE[code];
    this.issues = issues;
  }
  toEnvelope(): ErrorEnvelope {
    return { error: { code: this.code, message: this.message, ...(this.issues ? { issues: this.issues } : {}) } };
  }
}
