/**
 * TanStack Query hooks for model specs. Keys come only from `specKeys`; an invalid id is
 * `skipToken` (idle, so the screen can say "not found" instead of loading forever); the list
 * keeps the previous answer on screen while a new filter (mine / archived) loads.
 */
import { keepPreviousData, skipToken, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { ModelSpecInput, SavedSpec } from '../shared/specs';
import { copySpec, createSpec, getSpec, listSpecs, setSpecArchived, updateSpec, type SpecListQuery } from '../api/specs';
import { isId } from './use-libraries';

export const specKeys = {
  all: ['specs'] as const,
  lists: ['specs', 'list'] as const,
  list: (q: SpecListQuery) => ['specs', 'list', { mine: !!q.mine, archived: !!q.archived }] as const,
  one: (id: number) => ['specs', 'one', id] as const,
};

export const useSpecs = (q: SpecListQuery = {}) => useQuery({ queryKey: specKeys.list(q), queryFn: () => listSpecs(q), placeholderData: keepPreviousData });
export const useSpec = (id: number | undefined) => useQuery({ queryKey: specKeys.one(id ?? 0), queryFn: isId(id) ? () => getSpec(id) : skipToken });

export interface SaveSpecVars {
  /** Set: change this spec (PUT); unset: create one (POST, with `idempotencyKey`). */
  id?: number;
  name: string;
  editionId: number;
  spec: ModelSpecInput;
  idempotencyKey?: string;
}

export function useSaveSpec() {
  const qc = useQueryClient();
  return useMutation<SavedSpec, KeelsonApiError, SaveSpecVars>({
    mutationFn: ({ id, idempotencyKey, ...body }) => (id ? updateSpec(id, body) : createSpec(body, idempotencyKey)),
    onSuccess: (s) => {
      qc.setQueryData(specKeys.one(s.id), s);
      void qc.invalidateQueries({ queryKey: specKeys.lists });
    },
  });
}

export function useCopySpec() {
  const qc = useQueryClient();
  return useMutation<SavedSpec, KeelsonApiError, { id: number; name?: string }>({
    mutationFn: ({ id, name }) => copySpec(id, name),
    onSuccess: () => void qc.invalidateQueries({ queryKey: specKeys.lists }),
  });
}

/** Archive (`archived: true`) or restore a spec; the lists and the spec refresh. */
export function useArchiveSpec() {
  const qc = useQueryClient();
  return useMutation<SavedSpec, KeelsonApiError, { id: number; archived: boolean }>({
    mutationFn: ({ id, archived }) => setSpecArchived(id, archived),
    onSuccess: (s) => {
      qc.setQueryData(specKeys.one(s.id), s);
      void qc.invalidateQueries({ queryKey: specKeys.lists });
    },
  });
}
