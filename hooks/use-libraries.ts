/**
 * TanStack Query hooks for return libraries. Keys come only from `libraryKeys`; a missing or
 * invalid id is `skipToken` (the query is idle, never pending forever); lists keep the previous
 * answer on screen while a new filter loads.
 */
import { keepPreviousData, skipToken, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { ConfirmResponse, ConfirmUploadBody, LibraryDetail, LibraryListQuery, Upload } from '../shared/libraries';
import {
  archiveLibrary,
  confirmUpload,
  deleteEdition,
  discardUpload,
  getEdition,
  getEditionData,
  getEditionMeta,
  getLibrary,
  getUpload,
  listLibraries,
  publishLibrary,
  unpublishLibrary,
  uploadLibraryFile,
} from '../api/libraries';

export const libraryKeys = {
  all: ['libraries'] as const,
  list: (q: Partial<LibraryListQuery>) => ['libraries', 'list', q] as const,
  one: (id: number) => ['libraries', 'one', id] as const,
  edition: (id: number, n: number) => ['libraries', 'edition', id, n] as const,
  data: (id: number, n: number) => ['libraries', 'edition-data', id, n] as const,
  /** Series names, kinds and dates of an edition, without values (the spec form's read). */
  meta: (id: number, n: number) => ['libraries', 'edition-meta', id, n] as const,
  upload: (id: string) => ['libraries', 'upload', id] as const,
};

/** True for a usable id: a positive whole number. */
export const isId = (id: number | undefined): id is number => id !== undefined && Number.isSafeInteger(id) && id > 0;

export const useLibraries = (q: Partial<LibraryListQuery>) =>
  useQuery({ queryKey: libraryKeys.list(q), queryFn: () => listLibraries(q), placeholderData: keepPreviousData });
export const useLibrary = (id: number | undefined) =>
  useQuery({ queryKey: libraryKeys.one(id ?? 0), queryFn: isId(id) ? () => getLibrary(id) : skipToken });
export const useEdition = (id: number | undefined, n: number | undefined) =>
  useQuery({ queryKey: libraryKeys.edition(id ?? 0, n ?? 0), queryFn: isId(id) && isId(n) ? () => getEdition(id, n) : skipToken });
export const useEditionData = (id: number | undefined, n: number | undefined, enabled = true) =>
  useQuery({ queryKey: libraryKeys.data(id ?? 0, n ?? 0), queryFn: enabled && isId(id) && isId(n) ? () => getEditionData(id, n) : skipToken, staleTime: 5 * 60_000 });
/** An edition's series and dates without values; an edition never changes, so it is kept. */
export const useEditionMeta = (id: number | undefined, n: number | undefined) =>
  useQuery({ queryKey: libraryKeys.meta(id ?? 0, n ?? 0), queryFn: isId(id) && isId(n) ? () => getEditionMeta(id, n) : skipToken, staleTime: Infinity });
export const useUpload = (id: string | undefined) =>
  useQuery({ queryKey: libraryKeys.upload(id ?? ''), queryFn: id ? () => getUpload(id) : skipToken });

export function useUploadFile() {
  const qc = useQueryClient();
  return useMutation<Upload, KeelsonApiError, { file: Blob; name: string; libraryId?: number }>({
    mutationFn: ({ file, name, libraryId }) => uploadLibraryFile(file, name, libraryId),
    onSuccess: (u) => qc.setQueryData(libraryKeys.upload(u.id), u),
  });
}

export function useConfirmUpload() {
  const qc = useQueryClient();
  return useMutation<ConfirmResponse, KeelsonApiError, { id: string; body: ConfirmUploadBody; idempotencyKey?: string }>({
    mutationFn: ({ id, body, idempotencyKey }) => confirmUpload(id, body, idempotencyKey),
    onSuccess: () => void qc.invalidateQueries({ queryKey: libraryKeys.all }),
  });
}

export function useDiscardUpload() {
  return useMutation<void, KeelsonApiError, string>({ mutationFn: (id) => discardUpload(id) });
}

function useLibraryAction<V>(fn: (v: V) => Promise<LibraryDetail | void>) {
  const qc = useQueryClient();
  return useMutation<LibraryDetail | void, KeelsonApiError, V>({
    mutationFn: fn,
    onSuccess: () => void qc.invalidateQueries({ queryKey: libraryKeys.all }),
  });
}

export const usePublishLibrary = () => useLibraryAction((id: number) => publishLibrary(id));
export const useUnpublishLibrary = () => useLibraryAction((id: number) => unpublishLibrary(id));
export const useArchiveLibrary = () => useLibraryAction(({ id, archived }: { id: number; archived: boolean }) => archiveLibrary(id, archived));
export const useDeleteEdition = () => useLibraryAction(({ id, n }: { id: number; n: number }) => deleteEdition(id, n));
