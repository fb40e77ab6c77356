/** Fetchers for model specs, and the library reads the spec form needs. */
import { z } from 'zod';
import { apiRequest } from './client';
import { specResponseSchema, specsResponseSchema, type ModelSpecInput } from '../shared/specs';
import { editionDataResponseSchema, librariesResponseSchema, libraryResponseSchema } from '../shared/libraries';

export async function listSpecs(opts: { mine?: boolean } = {}) {
  return (await apiRequest(`/specs${opts.mine ? '?mine=true' : ''}`, { schema: specsResponseSchema })).specs;
}
export async function getSpec(id: number) {
  return (await apiRequest(`/specs/${id}`, { schema: specResponseSchema })).spec;
}
export async function createSpec(body: { name: string; editionId: number; spec: ModelSpecInput }) {
  return (await apiRequest('/specs', { method: 'POST', body, schema: specResponseSchema })).spec;
}
export async function updateSpec(id: number, body: { name?: string; editionId?: number; spec?: ModelSpecInput }) {
  return (await apiRequest(`/specs/${id}`, { method: 'PUT', body, schema: specResponseSchema })).spec;
}
export async function copySpec(id: number, name?: string) {
  return (await apiRequest(`/specs/${id}/copy`, { method: 'POST', body: name ? { name } : {}, schema: specResponseSchema })).spec;
}

export async function listLibrariesForSpecs() {
  return (await apiRequest('/libraries', { schema: librariesResponseSchema })).libraries;
}
export async function getLibraryForSpecs(id: number) {
  return (await apiRequest(`/libraries/${id}`, { schema: libraryResponseSchema })).library;
}
/** An edition's dates and series (kinds, traded flags) for the form's live N, K, T. */
export async function getEditionForSpecs(libraryId: number, n: number) {
  return apiRequest(`/libraries/${libraryId}/editions/${n}/data`, { schema: editionDataResponseSchema });
}
export const specCheckResponseSchema = z.object({
  check: z.object({ T: z.number(), N: z.number(), K: z.number(), df: z.number(), issues: z.array(z.object({ path: z.array(z.union([z.string(), z.number()])), message: z.string() })) }),
});
