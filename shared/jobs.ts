import { z } from 'zod';
import type { BootstrapResult } from '../lib/gmm/bootstrap';
import type { SubsetSweepResult } from '../lib/gmm/subset-sweep';
import type { RollingResult } from '../lib/gmm/rolling';

/**
 * Deep checks run as background jobs (issue 6): request bodies, parameter schemas and the job
 * shape the API returns. The results' shapes are lib/gmm's result types.
 */

export const JOB_KINDS = ['bootstrap', 'subset-sweep', 'rolling'] as const;
export const jobKindSchema = z.enum(JOB_KINDS);
export type JobKind = z.infer<typeof jobKindSchema>;

export const JOB_KIND_LABELS: Readonly<Record<JobKind, string>> = {
  bootstrap: 'Bootstrap',
  'subset-sweep': 'Subset sweep',
  rolling: 'Rolling window',
};

export const JOB_STATUSES = ['queued', 'running', 'finished', 'failed', 'cancelled', 'interrupted'] as const;
export const jobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof jobStatusSchema>;
export const ACTIVE_JOB_STATUSES: readonly JobStatus[] = ['queued', 'running'];
export const RESTARTABLE_JOB_STATUSES: readonly JobStatus[] = ['interrupted', 'failed', 'cancelled'];

/** Most bootstrap draws one job may ask for. */
export const MAX_BOOTSTRAP_DRAWS = 100_000;

export const bootstrapParamsSchema = z
  .object({
    draws: z.number().int('Draws are a whole number').min(19, 'Use at least 19 draws').max(MAX_BOOTSTRAP_DRAWS, `Use at most ${MAX_BOOTSTRAP_DRAWS} draws`).default(999),
    scheme: z.enum(['iid', 'block']).default('iid'),
    /** Block length for scheme 'block'; default ceil(T^(1/3)). */
    blockLength: z.number().int('The block length is a whole number').min(1, 'The block length is at least 1').optional(),
    /** Generator seed; chosen at random and stored when left out, so a restart repeats the draws. */
    seed: z.number().int().min(0).max(0xffffffff).optional(),
  })
  .strict();
export type BootstrapParams = z.output<typeof bootstrapParamsSchema>;

export const subsetSweepParamsSchema = z
  .object({
    /** Candidate factors (factor series of the run's edition); default: the run's factors. At most 15. */
    candidates: z.array(z.string().trim().min(1)).min(1, 'Name at least one candidate factor').max(15, 'The sweep takes at most 15 candidate factors').optional(),
    /** Models listed per size (and counted in the factor frequencies). */
    topPerSize: z.number().int().min(1).max(20).default(5),
  })
  .strict();
export type SubsetSweepParams = z.output<typeof subsetSweepParamsSchema>;

export const rollingParamsSchema = z
  .object({
    window: z.enum(['rolling', 'expanding']).default('rolling'),
    /** Window length (or first window, expanding) in periods. */
    length: z.number().int('The window length is a whole number').min(2, 'The window is at least 2 periods'),
    step: z.number().int('The step is a whole number').min(1, 'The step is at least 1 period').default(12),
  })
  .strict();
export type RollingParams = z.output<typeof rollingParamsSchema>;

export const startCheckBodySchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('bootstrap'), params: bootstrapParamsSchema.default({ draws: 999, scheme: 'iid' }) }),
  z.object({ kind: z.literal('subset-sweep'), params: subsetSweepParamsSchema.default({ topPerSize: 5 }) }),
  z.object({ kind: z.literal('rolling'), params: rollingParamsSchema }),
]);
export type StartCheckBody = z.input<typeof startCheckBodySchema>;
export type StartCheck = z.output<typeof startCheckBodySchema>;

export type JobParams = BootstrapParams | SubsetSweepParams | RollingParams;
export type JobResult = BootstrapResult | SubsetSweepResult | RollingResult;

export const jobSchema = z.object({
  id: z.number().int(),
  kind: jobKindSchema,
  runId: z.number().int(),
  authorId: z.number().int(),
  authorName: z.string(),
  params: z.record(z.string(), z.unknown()),
  status: jobStatusSchema,
  done: z.number().int(),
  total: z.number().int(),
  attempts: z.number().int(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  /** Seconds left at the current pace; null until the first chunk is done or when not running. */
  etaSeconds: z.number().nullable(),
  error: z.string().nullable(),
  /** The check's result (lib/gmm BootstrapResult, SubsetSweepResult or RollingResult) once finished. */
  result: z.unknown().nullable(),
});
export type Job = Omit<z.infer<typeof jobSchema>, 'result'> & { result: JobResult | null };
export const jobResponseSchema = z.object({ job: jobSchema });
export const jobsResponseSchema = z.object({ jobs: z.array(jobSchema) });

export const jobListQuerySchema = z.object({
  runId: z.coerce.number().int().positive().optional(),
  status: jobStatusSchema.optional(),
});
export type JobListQuery = z.infer<typeof jobListQuerySchema>;
