/** TanStack Query hooks for runs, compare and review. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { CreateRunBody, Run, RunListQuery, SignoffDecision } from '../shared/runs';
import { addComment, compareRuns, createRun, getReview, getReviewQueue, getRun, giveSignoff, listReviewers, listRuns, requestSignoff } from '../api/runs';

export const runKeys = {
  all: ['runs'] as const,
  list: (q: Partial<RunListQuery>) => ['runs', 'list', q] as const,
  one: (id: number) => ['runs', 'one', id] as const,
  review: (id: number) => ['runs', 'review', id] as const,
  compare: (a: number, b: number) => ['runs', 'compare', a, b] as const,
  queue: ['runs', 'queue'] as const,
};

export const useRuns = (q: Partial<RunListQuery> = {}) => useQuery({ queryKey: runKeys.list(q), queryFn: () => listRuns(q) });
// A finished run never changes: keep it.
export const useRun = (id: number | undefined) => useQuery({ queryKey: runKeys.one(id ?? 0), queryFn: () => getRun(id!), enabled: !!id, staleTime: Infinity });
export const useRunReview = (id: number | undefined) => useQuery({ queryKey: runKeys.review(id ?? 0), queryFn: () => getReview(id!), enabled: !!id });
export const useCompare = (a: number | undefined, b: number | undefined) =>
  useQuery({ queryKey: runKeys.compare(a ?? 0, b ?? 0), queryFn: () => compareRuns(a!, b!), enabled: !!a && !!b && a !== b, staleTime: Infinity });
export const useReviewQueue = () => useQuery({ queryKey: runKeys.queue, queryFn: getReviewQueue });
export const useReviewers = (enabled = true) => useQuery({ queryKey: ['reviewers'], queryFn: listReviewers, enabled });

export function useCreateRun() {
  const qc = useQueryClient();
  // idempotencyKey: one per user action (createRun makes one when it is left out).
  return useMutation<Run, KeelsonApiError, CreateRunBody & { idempotencyKey?: string }>({
    mutationFn: ({ idempotencyKey, ...body }) => createRun(body, idempotencyKey),
    onSuccess: (run) => {
      qc.setQueryData(runKeys.one(run.id), run);
      void qc.invalidateQueries({ queryKey: ['runs', 'list'] });
    },
  });
}

function useReviewMutation<V>(fn: (v: V) => Promise<unknown>, runId: number) {
  const qc = useQueryClient();
  return useMutation<unknown, KeelsonApiError, V>({
    mutationFn: fn,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: runKeys.review(runId) });
      void qc.invalidateQueries({ queryKey: runKeys.queue });
      void qc.invalidateQueries({ queryKey: ['runs', 'list'] });
      void qc.refetchQueries({ queryKey: runKeys.one(runId) });
    },
  });
}

export const useAddComment = (runId: number) => useReviewMutation((text: string) => addComment(runId, text), runId);
export const useGiveSignoff = (runId: number) => useReviewMutation((v: { decision: SignoffDecision; note?: string }) => giveSignoff(runId, v.decision, v.note), runId);
export const useRequestSignoff = (runId: number) => useReviewMutation((v: { reviewerId: number; note?: string }) => requestSignoff(runId, v.reviewerId, v.note), runId);
