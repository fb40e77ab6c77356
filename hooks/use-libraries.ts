/** TanStack Query hooks for return libraries. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { ConfirmResponse, ConfirmUploadBody, LibraryDetail, LibraryListQuery, Upload } from '../shared/libraries';
import {
  archiveLibrary,
  confirmUpload,
  deleteEdition,
  discardUpload,
  getEdition,
  getEditionData,
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
  upload: (id: string) => ['libraries', 'upload', id] as const,
};

export const useLibraries = (q: Partial<LibraryListQuery>) => useQuery({ queryKey: libraryKeys.list(q), queryFn: () => listLibraries(q) });
export const useLibrary = (id: number | undefined) =>
  useQuery({ queryKey: libraryKeys.one(id ?? 0), queryFn: () => getLibrary(id!), enabled: !!id });
export const useEdition = (id: number | undefined, n: number | undefined) =>
  useQuery({ queryKey: libraryKeys.edition(id ?? 0, n ?? 0), queryFn: () => getEdition(id!, n!), enabled: !!id && !!n });
export const useEditionData = (id: number | undefined, n: number | undefined, enabled = true) =>
  useQuery({ queryKey: libraryKeys.data(id ?? 0, n ?? 0), queryFn: () => getEditionData(id!, n!), enabled: enabled && !!id && !!n, staleTime: 5 * 60_000 });
export const useUpload = (id: string | undefined) =>
  useQuery({ queryKey: libraryKeys.upload(id ?? ''), queryFn: () => getUpload(id!), enabled: !!id });

export function useUploadFile() {
  const qc = useQueryClient();
  return useMutation<Upload, KeelsonApiError, { file: Blob; name: string; libraryId?: number }>({
    mutationFn: ({ file, name, libraryId }) => uploadLibraryFile(file, name, libraryId),
    onSuccess: (u) => qc.setQueryData(libraryKeys.upload(u.id), u),
  });
}

export function useConfirmUpload() {
  const qc = useQueryClient();
  return useMutation<ConfirmResponse, KeelsonApiError, { id: string; body: ConfirmUploadBody }>({
    mutationFn: ({ id, body }) => confirmUpload(id, body),
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
