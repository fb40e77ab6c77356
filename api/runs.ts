/** Fetchers for runs, exports, compare and review. */
import { z } from 'zod';
import { apiRequest, newIdempotencyKey } from './client';
import {
  compareResponseSchema,
  reviewQueueSchema,
  reviewersResponseSchema,
  runCommentSchema,
  runResponseSchema,
  runReviewResponseSchema,
  runsResponseSchema,
  signoffRequestSchema,
  signoffSchema,
  type CreateRunBody,
  type RunListQuery,
  type SignoffDecision,
} from '../shared/runs';

export async function listRuns(q: Partial<RunListQuery> = {}) {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null) params.set(k, String(v));
  const qs = params.toString();
  return (await apiRequest(`/runs${qs ? `?${qs}` : ''}`, { schema: runsResponseSchema })).runs;
}
export async function getRun(id: number) {
  return (await apiRequest(`/runs/${id}`, { schema: runResponseSchema })).run;
}
/** Starts a run; one Idempotency-Key per user action (a repeated request answers with the same run). */
export async function createRun(body: CreateRunBody, idempotencyKey = newIdempotencyKey()) {
  return (await apiRequest('/runs', { method: 'POST', body, schema: runResponseSchema, idempotencyKey })).run;
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
export async function addComment(runId: number, text: string) {
  return (await apiRequest(`/runs/${runId}/comments`, { method: 'POST', body: { text }, schema: z.object({ comment: runCommentSchema }) })).comment;
}
export async function giveSignoff(runId: number, decision: SignoffDecision, note?: string) {
  return (await apiRequest(`/runs/${runId}/signoff`, { method: 'POST', body: { decision, ...(note ? { note } : {}) }, schema: z.object({ signoff: signoffSchema }) })).signoff;
}
export async function requestSignoff(runId: number, reviewerId: number, note?: string) {
  return (
    await apiRequest(`/runs/${runId}/signoff-requests`, { method: 'POST', body: { reviewerId, ...(note ? { note } : {}) }, schema: z.object({ request: signoffRequestSchema }) })
  ).request;
}
export async function listReviewers() {
  return (await apiRequest('/review/reviewers', { schema: reviewersResponseSchema })).reviewers;
}
export async function getReviewQueue() {
  return apiRequest('/review', { schema: reviewQueueSchema });
}
