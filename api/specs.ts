/** Fetchers for model specs. Library reads of the spec form live in api/libraries.ts (edition metadata). */
import { apiRequest, newIdempotencyKey } from './client';
import { specResponseSchema, specsResponseSchema, type ModelSpecInput } from '../shared/specs';

export interface SpecListQuery {
  mine?: boolean;
  /** true: archived specs are listed too (marked by `archivedAt`). */
  archived?: boolean;
}

export async function listSpecs(q: SpecListQuery = {}) {
  const params = new URLSearchParams();
  if (q.mine) params.set('mine', 'true');
  if (q.archived) params.set('archived', 'true');
  const qs = params.toString();
  return (await apiRequest(`/specs${qs ? `?${qs}` : ''}`, { schema: specsResponseSchema })).specs;
}
export async function getSpec(id: number) {
  return (await apiRequest(`/specs/${id}`, { schema: specResponseSchema })).spec;
}
/** Creates a spec; pass one key per user action so a repeated request returns the same spec. */
export async function createSpec(body: { name: string; editionId: number; spec: ModelSpecInput }, idempotencyKey = newIdempotencyKey()) {
  return (await apiRequest('/specs', { method: 'POST', body, schema: specResponseSchema, idempotencyKey })).spec;
}
export async function updateSpec(id: number, body: { name?: string; editionId?: number; spec?: ModelSpecInput }) {
  return (await apiRequest(`/specs/${id}`, { method: 'PUT', body, schema: specResponseSchema })).spec;
}
export async function copySpec(id: number, name?: string, idempotencyKey = newIdempotencyKey()) {
  return (await apiRequest(`/specs/${id}/copy`, { method: 'POST', body: name ? { name } : {}, schema: specResponseSchema, idempotencyKey })).spec;
}
/** Archives (hides from the list; runs stay readable) or restores a spec. */
export async function setSpecArchived(id: number, archived: boolean) {
  return (await apiRequest(`/specs/${id}/${archived ? 'archive' : 'restore'}`, { method: 'POST', body: {}, schema: specResponseSchema })).spec;
}
