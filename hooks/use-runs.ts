/** TanStack Query hooks for runs, compare and review. */
import { keepPreviousData, useInfiniteQuery, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import type { ChangeBasisBody, CreateRunBody, FirstStageCopyResponse, Run, RunListQuery, SignoffDecision } from '../shared/runs';
import {
  addComment,
  cancelRun,
  changeRunBasis,
  compareRuns,
  createRun,
  firstStageCopy,
  getReview,
  getReviewQueue,
  getRun,
  giveSignoff,
  listReviewers,
  listRuns,
  listRunsPage,
  requestSignoff,
} from '../api/runs';
import { newIdempotencyKey } from '../api/client';
import { useEffect } from 'react';
import type { Job } from '../shared/jobs';
import { isActiveJob, POLL_MS, useJob } from './use-jobs';
import { specKeys } from './use-specs';

export const runKeys = {
  all: ['runs'] as const,
  lists: ['runs', 'list'] as const,
  list: (q: Partial<RunListQuery>) => ['runs', 'list', q] as const,
  pages: (q: Partial<RunListQuery>) => ['runs', 'list', q, 'pages'] as const,
  reviewers: ['reviewers'] as const,
  one: (id: number) => ['runs', 'one', id] as const,
  review: (id: number) => ['runs', 'review', id] as const,
  compare: (a: number, b: number) => ['runs', 'compare', a, b] as const,
  queue: ['runs', 'queue'] as const,
};

export const useRuns = (q: Partial<RunListQuery> = {}) => useQuery({ queryKey: runKeys.list(q), queryFn: () => listRuns(q), placeholderData: keepPreviousData });
/** The runs list, page by page (`fetchNextPage` for "Show more"); a filter change keeps the old rows until the new ones arrive. */
export const RUNS_PAGE_SIZE = 50;
export const useRunPages = (q: Partial<RunListQuery> = {}) =>
  useInfiniteQuery({
    queryKey: runKeys.pages(q),
    queryFn: ({ pageParam }) => listRunsPage({ ...q, limit: RUNS_PAGE_SIZE, ...(pageParam ? { before: pageParam } : {}) }),
    initialPageParam: 0,
    getNextPageParam: (last) => last.nextCursor ?? undefined,
    placeholderData: keepPreviousData,
  });
// A finished run never changes: keep it.
/** One run; polled while it is queued or running (a heavy run estimated by the pool or a queue worker). */
export const useRun = (id: number | undefined) =>
  useQuery({
    queryKey: runKeys.one(id ?? 0),
    queryFn: () => getRun(id!),
    enabled: !!id,
    staleTime: Infinity,
    refetchInterval: (query) => (query.state.data && (query.state.data.status === 'queued' || query.state.data.status === 'running') ? POLL_MS : false),
  });
export const useRunReview = (id: number | undefined) => useQuery({ queryKey: runKeys.review(id ?? 0), queryFn: () => getReview(id!), enabled: !!id });
export const useCompare = (a: number | undefined, b: number | undefined) =>
  useQuery({ queryKey: runKeys.compare(a ?? 0, b ?? 0), queryFn: () => compareRuns(a!, b!), enabled: !!a && !!b && a !== b, staleTime: Infinity });
export const useReviewQueue = () => useQuery({ queryKey: runKeys.queue, queryFn: getReviewQueue });
export const useReviewers = (enabled = true) => useQuery({ queryKey: runKeys.reviewers, queryFn: listReviewers, enabled });

export function useCreateRun() {
  const qc = useQueryClient();
  // idempotencyKey: one per user action (createRun makes one when it is left out).
  return useMutation<Run, KeelsonApiError, CreateRunBody & { idempotencyKey?: string }>({
    mutationFn: ({ idempotencyKey, ...body }) => createRun(body, idempotencyKey),
    onSuccess: (run) => {
      qc.setQueryData(runKeys.one(run.id), run);
      void qc.invalidateQueries({ queryKey: runKeys.lists });
    },
  });
}

/** Cancels a queued or running run; the page shows it as cancelled at once. */
export function useCancelRun() {
  const qc = useQueryClient();
  return useMutation<Run, KeelsonApiError, number>({
    mutationFn: (id) => cancelRun(id),
    onSuccess: (run) => {
      qc.setQueryData(runKeys.one(run.id), run);
      void qc.invalidateQueries({ queryKey: runKeys.lists });
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
      void qc.invalidateQueries({ queryKey: runKeys.lists });
      void qc.refetchQueries({ queryKey: runKeys.one(runId) });
    },
  });
}

// One Idempotency-Key per mutate call (one press): a repeat of the same request is answered, not duplicated.
export const useAddComment = (runId: number) => useReviewMutation((text: string) => addComment(runId, text, newIdempotencyKey()), runId);
export const useGiveSignoff = (runId: number) =>
  useReviewMutation((v: { decision: SignoffDecision; note?: string }) => giveSignoff(runId, v.decision, v.note, newIdempotencyKey()), runId);
export const useRequestSignoff = (runId: number) =>
  useReviewMutation((v: { reviewerId: number; note?: string }) => requestSignoff(runId, v.reviewerId, v.note, newIdempotencyKey()), runId);

/** Puts a newly created run into the cache and refreshes the lists. */
function useRememberRun() {
  const qc = useQueryClient();
  return (run: Run) => {
    qc.setQueryData(runKeys.one(run.id), run);
    void qc.invalidateQueries({ queryKey: runKeys.lists });
  };
}

/** A new run of `runId` on another basis (`POST /runs/:id/basis`); the run itself is not changed. */
export function useChangeBasis(runId: number) {
  const remember = useRememberRun();
  return useMutation<Run, KeelsonApiError, ChangeBasisBody>({
    mutationFn: (body) => changeRunBasis(runId, body, newIdempotencyKey()),
    onSuccess: remember,
  });
}

/** A first-stage copy of `runId`'s spec, run on the same edition (`POST /runs/:id/first-stage-copy`). */
export function useFirstStageCopy(runId: number) {
  const remember = useRememberRun();
  const qc = useQueryClient();
  return useMutation<FirstStageCopyResponse, KeelsonApiError, void>({
    mutationFn: () => firstStageCopy(runId, newIdempotencyKey()),
    onSuccess: (out) => {
      remember(out.run);
      if (out.spec) void qc.invalidateQueries({ queryKey: specKeys.all });
    },
  });
}

/**
 * The run's own bootstrap (the deep check started with a spec that asks for bootstrap p-values):
 * polls its job while it runs (useJob) and, when the job finishes, refetches the run, whose
 * ledger then carries the bootstrap p-values (the server merges them when the job ends).
 * `pending`: asked for and not in the ledger yet while the job is queued or running.
 */
export function useRunBootstrap(run: Run | undefined): { job: Job | undefined; pending: boolean; waitingForMerge: boolean } {
  const qc = useQueryClient();
  const r = run?.result ?? null;
  const wanted = !!run && run.bootstrapJobId !== null && !!r && r.bootstrap === null;
  const job = useJob(wanted ? (run.bootstrapJobId ?? undefined) : undefined).data;
  const status = job?.status;
  const runId = run?.id;
  useEffect(() => {
    if (wanted && status === 'finished' && runId) void qc.invalidateQueries({ queryKey: runKeys.one(runId) });
  }, [wanted, status, runId, qc]);
  const active = !!job && isActiveJob(job);
  return { job: wanted ? job : undefined, pending: wanted && (active || !job || status === 'finished'), waitingForMerge: wanted && status === 'finished' };
}
