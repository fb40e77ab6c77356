/** TanStack Query hooks for model specs and the library reads of the spec form. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { ModelSpecInput, SavedSpec } from '../shared/specs';
import { copySpec, createSpec, getEditionForSpecs, getLibraryForSpecs, getSpec, listLibrariesForSpecs, listSpecs, updateSpec } from '../api/specs';

export const specKeys = {
  all: ['specs'] as const,
  list: (mine: boolean) => ['specs', 'list', mine] as const,
  one: (id: number) => ['specs', 'one', id] as const,
};

export const useSpecs = (mine = false) => useQuery({ queryKey: specKeys.list(mine), queryFn: () => listSpecs({ mine }) });
export const useSpec = (id: number | undefined) => useQuery({ queryKey: specKeys.one(id ?? 0), queryFn: () => getSpec(id!), enabled: !!id });

export const useSpecLibraries = () => useQuery({ queryKey: ['libraries', 'for-specs'], queryFn: listLibrariesForSpecs });
export const useSpecLibrary = (id: number | undefined) =>
  useQuery({ queryKey: ['libraries', 'for-specs', id], queryFn: () => getLibraryForSpecs(id!), enabled: !!id });
export const useSpecEdition = (libraryId: number | undefined, n: number | undefined) =>
  useQuery({ queryKey: ['libraries', 'edition-data', libraryId, n], queryFn: () => getEditionForSpecs(libraryId!, n!), enabled: !!libraryId && !!n, staleTime: 5 * 60_000 });

export function useSaveSpec() {
  const qc = useQueryClient();
  return useMutation<SavedSpec, KeelsonApiError, { id?: number; name: string; editionId: number; spec: ModelSpecInput }>({
    mutationFn: ({ id, ...body }) => (id ? updateSpec(id, body) : createSpec(body)),
    onSuccess: (s) => {
      qc.setQueryData(specKeys.one(s.id), s);
      void qc.invalidateQueries({ queryKey: specKeys.all });
    },
  });
}

export function useCopySpec() {
  const qc = useQueryClient();
  return useMutation<SavedSpec, KeelsonApiError, { id: number; name?: string }>({
    mutationFn: ({ id, name }) => copySpec(id, name),
    onSuccess: () => void qc.invalidateQueries({ queryKey: specKeys.all }),
  });
}
