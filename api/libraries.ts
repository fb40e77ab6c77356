/** Fetchers for return libraries (see shared/libraries.ts for the shapes). */
import { apiRequest, newIdempotencyKey } from './client';
import { editionMetaResponseSchema } from '../shared/edition-meta';
import {
  confirmResponseSchema,
  editionDataResponseSchema,
  editionResponseSchema,
  librariesResponseSchema,
  libraryResponseSchema,
  uploadResponseSchema,
  type ConfirmUploadBody,
  type LibraryListQuery,
} from '../shared/libraries';

export async function listLibraries(q: Partial<LibraryListQuery> = {}) {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== '') params.set(k, String(v));
  const qs = params.toString();
  return (await apiRequest(`/libraries${qs ? `?${qs}` : ''}`, { schema: librariesResponseSchema })).libraries;
}

export async function getLibrary(id: number) {
  return (await apiRequest(`/libraries/${id}`, { schema: libraryResponseSchema })).library;
}

export async function getEdition(id: number, n: number) {
  return (await apiRequest(`/libraries/${id}/editions/${n}`, { schema: editionResponseSchema })).edition;
}

export async function getEditionData(id: number, n: number) {
  return apiRequest(`/libraries/${id}/editions/${n}/data`, { schema: editionDataResponseSchema });
}

/** An edition's series names, kinds, traded flags and dates, without values. */
export async function getEditionMeta(id: number, n: number) {
  return (await apiRequest(`/libraries/${id}/editions/${n}/meta`, { schema: editionMetaResponseSchema })).meta;
}

/** Same-origin URL of an edition's CSV export (the session cookie authorises the download). */
export function exportUrl(id: number, n: number): string {
  return `/api/v1/libraries/${id}/editions/${n}/export.csv`;
}

/** Uploads a CSV (a web File/Blob) for review; with `libraryId` as that library's next edition (kinds carried over). */
export async function uploadLibraryFile(file: Blob, fileName: string, libraryId?: number) {
  const form = new FormData();
  if (libraryId !== undefined) form.append('libraryId', String(libraryId));
  form.append('file', file, fileName);
  return (await apiRequest('/libraries/uploads', { method: 'POST', body: form, schema: uploadResponseSchema })).upload;
}

export async function getUpload(id: string) {
  return (await apiRequest(`/libraries/uploads/${encodeURIComponent(id)}`, { schema: uploadResponseSchema })).upload;
}

export async function discardUpload(id: string) {
  await apiRequest(`/libraries/uploads/${encodeURIComponent(id)}`, { method: 'DELETE' });
}

/** Confirms a reviewed upload (creates the library or its next edition); one key per press of the confirm button. */
export async function confirmUpload(id: string, body: ConfirmUploadBody, idempotencyKey = newIdempotencyKey()) {
  return apiRequest(`/libraries/uploads/${encodeURIComponent(id)}/confirm`, { method: 'POST', body, schema: confirmResponseSchema, idempotencyKey });
}

export async function publishLibrary(id: number) {
  return (await apiRequest(`/libraries/${id}/publish`, { method: 'POST', body: {}, schema: libraryResponseSchema })).library;
}

export async function unpublishLibrary(id: number) {
  return (await apiRequest(`/libraries/${id}/unpublish`, { method: 'POST', body: {}, schema: libraryResponseSchema })).library;
}

export async function archiveLibrary(id: number, archived: boolean) {
  return (await apiRequest(`/libraries/${id}/${archived ? 'archive' : 'restore'}`, { method: 'POST', body: {}, schema: libraryResponseSchema })).library;
}

export async function deleteEdition(id: number, n: number) {
  await apiRequest(`/libraries/${id}/editions/${n}`, { method: 'DELETE' });
}
