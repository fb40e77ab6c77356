/**
 * Fetchers for runs, exports, compare and review. Every POST that creates something sends an
 * `Idempotency-Key` (one per user action: the caller passes the key it made for the press, or a
 * fresh one is made here), so a repeated request answers the first response instead of a duplicate.
 */
import { z } from 'zod';
import { apiRequest, newIdempotencyKey } from './client';
import {
  compareResponseSchema,
  firstStageCopyResponseSchema,
  reviewQueueSchema,
  reviewersResponseSchema,
  runCommentSchema,
  runResponseSchema,
  runReviewResponseSchema,
  runsResponseSchema,
  signoffRequestSchema,
  signoffSchema,
  type ChangeBasisBody,
  type CreateRunBody,
  type RunListQuery,
  type SignoffDecision,
} from '../shared/runs';

/** One page of runs (newest first) with the total and the cursor of the next page. */
export async function listRunsPage(q: Partial<RunListQuery> = {}) {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null) params.set(k, String(v));
  const qs = params.toString();
  return apiRequest(`/runs${qs ? `?${qs}` : ''}`, { schema: runsResponseSchema });
}

/** The first page of runs only (pickers that show a few). */
export async function listRuns(q: Partial<RunListQuery> = {}) {
  return (await listRunsPage(q)).runs;
}
export async function getRun(id: number) {
  return (await apiRequest(`/runs/${id}`, { schema: runResponseSchema })).run;
}
/** Starts a run; one Idempotency-Key per user action (a repeated request answers with the same run). */
export async function createRun(body: CreateRunBody, idempotencyKey = newIdempotencyKey()) {
  return (await apiRequest('/runs', { method: 'POST', body, schema: runResponseSchema, idempotencyKey })).run;
}
/** Cancels a queued or running (large) run: its author or an admin. */
export async function cancelRun(id: number) {
  return (await apiRequest(`/runs/${id}/cancel`, { method: 'POST', body: {}, schema: runResponseSchema })).run;
}
export async function compareRuns(a: number, b: number) {
  return apiRequest(`/runs/compare?a=${a}&b=${b}`, { schema: compareResponseSchema });
}
/** Same-origin download links of a finished run. */
export function exportHref(id: number, kind: 'export.csv' | 'export.tex' | 'result.json'): string {
  return `/api/v1/runs/${id}/${kind}`;
}

export async function getReview(runId: number) {
  return (await apiRequest(`/runs/${runId}/review`, { schema: runReviewResponseSchema })).review;
}
export async function addComment(runId: number, text: string, idempotencyKey: string = newIdempotencyKey()) {
  return (await apiRequest(`/runs/${runId}/comments`, { method: 'POST', body: { text }, schema: z.object({ comment: runCommentSchema }), idempotencyKey })).comment;
}
export async function giveSignoff(runId: number, decision: SignoffDecision, note?: string, idempotencyKey: string = newIdempotencyKey()) {
  return (
    await apiRequest(`/runs/${runId}/signoff`, { method: 'POST', body: { decision, ...(note ? { note } : {}) }, schema: z.object({ signoff: signoffSchema }), idempotencyKey })
  ).signoff;
}
export async function requestSignoff(runId: number, reviewerId: number, note?: string, idempotencyKey: string = newIdempotencyKey()) {
  return (
    await apiRequest(`/runs/${runId}/signoff-requests`, {
      method: 'POST',
      body: { reviewerId, ...(note ? { note } : {}) },
      schema: z.object({ request: signoffRequestSchema }),
      idempotencyKey,
    })
  ).request;
}
/** `POST /runs/:id/basis`: a new run of the same spec and edition on another basis (the run itself is not changed). */
export async function changeRunBasis(runId: number, body: ChangeBasisBody, idempotencyKey: string = newIdempotencyKey()) {
  return (await apiRequest(`/runs/${runId}/basis`, { method: 'POST', body, schema: runResponseSchema, idempotencyKey })).run;
}
/** `POST /runs/:id/first-stage-copy`: the spec copied with stage first and basis robust, run on the same edition. */
export async function firstStageCopy(runId: number, idempotencyKey: string = newIdempotencyKey()) {
  return apiRequest(`/runs/${runId}/first-stage-copy`, { method: 'POST', body: {}, schema: firstStageCopyResponseSchema, idempotencyKey });
}
export async function listReviewers() {
  return (await apiRequest('/review/reviewers', { schema: reviewersResponseSchema })).reviewers;
}
export async function getReviewQueue() {
  return apiRequest('/review', { schema: reviewQueueSchema });
}
