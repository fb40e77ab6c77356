/**
 * TanStack Query hooks for deep-check jobs. Progress reaches the client by polling: a query
 * refetches every second while any job it holds is queued or running, and stops when all ended.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { KeelsonApiError } from '../shared/errors';
import { ACTIVE_JOB_STATUSES, type Job, type JobListQuery, type StartCheckBody } from '../shared/jobs';
import { cancelJob, getJob, getJobLimits, listJobs, restartJob, startCheck } from '../api/jobs';

export const POLL_MS = 1000;

export const jobKeys = {
  all: ['jobs'] as const,
  lists: ['jobs', 'list'] as const,
  list: (q: Partial<JobListQuery>) => ['jobs', 'list', q] as const,
  one: (id: number) => ['jobs', 'one', id] as const,
  limits: ['jobs', 'limits'] as const,
};

/** The server's per-mode limits (they change only with a restart: never refetched as stale). */
export function useJobLimits() {
  return useQuery({ queryKey: jobKeys.limits, queryFn: getJobLimits, staleTime: Infinity });
}

export const isActiveJob = (j: Pick<Job, 'status'>) => ACTIVE_JOB_STATUSES.includes(j.status);

export function useJobs(q: Partial<JobListQuery> = {}) {
  return useQuery({
    queryKey: jobKeys.list(q),
    queryFn: () => listJobs(q),
    refetchInterval: (query) => ((query.state.data ?? []).some(isActiveJob) ? POLL_MS : false),
  });
}

export function useJob(id: number | undefined) {
  return useQuery({
    queryKey: jobKeys.one(id ?? 0),
    queryFn: () => getJob(id!),
    enabled: !!id,
    refetchInterval: (query) => (query.state.data && isActiveJob(query.state.data) ? POLL_MS : false),
  });
}

function useJobMutation<V>(fn: (v: V) => Promise<Job>) {
  const qc = useQueryClient();
  return useMutation<Job, KeelsonApiError, V>({
    mutationFn: fn,
    onSuccess: (job) => {
      qc.setQueryData(jobKeys.one(job.id), (old: Job | undefined) => (job.result || !old ? job : { ...job, result: old.result }));
      void qc.invalidateQueries({ queryKey: jobKeys.lists });
      void qc.invalidateQueries({ queryKey: jobKeys.one(job.id) });
    },
  });
}

export const useStartCheck = (runId: number) => useJobMutation((body: StartCheckBody) => startCheck(runId, body));
export const useCancelJob = () => useJobMutation((id: number) => cancelJob(id));
export const useRestartJob = () => useJobMutation((id: number) => restartJob(id));
