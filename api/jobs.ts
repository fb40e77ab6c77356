/** Fetchers for deep-check jobs. */
import { apiRequest } from './client';
import { jobLimitsResponseSchema, jobResponseSchema, jobsResponseSchema, type Job, type JobLimits, type JobListQuery, type StartCheckBody } from '../shared/jobs';

export async function listJobs(q: Partial<JobListQuery> = {}): Promise<Job[]> {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null) params.set(k, String(v));
  const qs = params.toString();
  return (await apiRequest(`/jobs${qs ? `?${qs}` : ''}`, { schema: jobsResponseSchema })).jobs;
}
export async function getJob(id: number): Promise<Job> {
  return (await apiRequest(`/jobs/${id}`, { schema: jobResponseSchema })).job;
}
export async function startCheck(runId: number, body: StartCheckBody): Promise<Job> {
  return (await apiRequest(`/runs/${runId}/checks`, { method: 'POST', body, schema: jobResponseSchema })).job;
}
export async function cancelJob(id: number): Promise<Job> {
  return (await apiRequest(`/jobs/${id}/cancel`, { method: 'POST', body: {}, schema: jobResponseSchema })).job;
}
export async function restartJob(id: number): Promise<Job> {
  return (await apiRequest(`/jobs/${id}/restart`, { method: 'POST', body: {}, schema: jobResponseSchema })).job;
}
/** This server's deep-check limits (its mode: embedded or queue workers). */
export async function getJobLimits(): Promise<JobLimits> {
  return (await apiRequest('/jobs/limits', { schema: jobLimitsResponseSchema })).limits;
}
