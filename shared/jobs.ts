import { z } from 'zod';
import {
  bootstrapResultSchema,
  holdoutJobResultSchema,
  rollingResultSchema,
  subsetSweepResultSchema,
  type BootstrapJobResult,
  type HoldoutJobResult,
  type RollingJobResult,
  type SubsetSweepJobResult,
} from './deep-check-results';

export type { HoldoutJobResult } from './deep-check-results';

/**
 * Deep checks run as background jobs (issue 6): request bodies, parameter schemas and the job
 * shape the API returns, its `result` validated by kind (shared/deep-check-results.ts).
 */

export const JOB_KINDS = ['bootstrap', 'subset-sweep', 'rolling', 'holdout'] as const;
export const jobKindSchema = z.enum(JOB_KINDS);
export type JobKind = z.infer<typeof jobKindSchema>;

export const JOB_KIND_LABELS: Readonly<Record<JobKind, string>> = {
  bootstrap: 'Bootstrap',
  'subset-sweep': 'Subset sweep',
  rolling: 'Rolling window',
  holdout: 'Hold-out check',
};

export const JOB_STATUSES = ['queued', 'running', 'finished', 'failed', 'cancelled', 'interrupted'] as const;
export const jobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof jobStatusSchema>;
export const ACTIVE_JOB_STATUSES: readonly JobStatus[] = ['queued', 'running'];
export const RESTARTABLE_JOB_STATUSES: readonly JobStatus[] = ['interrupted', 'failed', 'cancelled'];

/** Most bootstrap draws one job may ask for (the largest of the per-mode limits below). */
export const MAX_BOOTSTRAP_DRAWS = 100_000;
/** Most candidate factors a subset sweep may name (the largest of the per-mode limits; lib/gmm's own cap). */
export const MAX_SWEEP_CANDIDATES = 25;

/**
 * Where deep checks run: 'embedded' (the API's own worker-thread pool, the default) or 'queue'
 * (BullMQ workers over Redis, KEELSON_REDIS_URL set).
 */
export const JOB_MODES = ['embedded', 'queue'] as const;
export type JobMode = (typeof JOB_MODES)[number];

/**
 * Per-mode limits of one deep check. The request schema allows the largest; the service checks
 * the mode's own (422 naming the limit and the mode). Without workers a 15-candidate sweep (32,767
 * models) is what the API's own box is given; queue workers take 25 (33.5 million models, about
 * 20 s of one core at 0.6 µs a model with T = 600 and N = 25, spread over the workers).
 */
export const JOB_LIMITS: Readonly<Record<JobMode, { readonly sweepCandidates: number; readonly bootstrapDraws: number }>> = {
  embedded: { sweepCandidates: 15, bootstrapDraws: 100_000 },
  queue: { sweepCandidates: MAX_SWEEP_CANDIDATES, bootstrapDraws: MAX_BOOTSTRAP_DRAWS },
};

/** GET /jobs/limits: this server's mode and its limits, with the other mode's for comparison. */
export const jobLimitsSchema = z.object({
  mode: z.enum(JOB_MODES),
  sweepCandidates: z.number().int(),
  bootstrapDraws: z.number().int(),
  byMode: z.object({
    embedded: z.object({ sweepCandidates: z.number().int(), bootstrapDraws: z.number().int() }),
    queue: z.object({ sweepCandidates: z.number().int(), bootstrapDraws: z.number().int() }),
  }),
});
export type JobLimits = z.infer<typeof jobLimitsSchema>;
export const jobLimitsResponseSchema = z.object({ limits: jobLimitsSchema });

/** The limits as GET /jobs/limits answers them for `mode`. */
export function jobLimitsFor(mode: JobMode): JobLimits {
  return { mode, ...JOB_LIMITS[mode], byMode: { embedded: { ...JOB_LIMITS.embedded }, queue: { ...JOB_LIMITS.queue } } };
}

/** "at most 15 candidate factors without workers; 25 with queue workers" (messages of the client, CLI and server). */
export function sweepLimitText(): string {
  return `at most ${JOB_LIMITS.embedded.sweepCandidates} candidate factors without workers; ${JOB_LIMITS.queue.sweepCandidates} with queue workers`;
}
export function drawsLimitText(): string {
  const e = JOB_LIMITS.embedded.bootstrapDraws;
  const q = JOB_LIMITS.queue.bootstrapDraws;
  return e === q ? `at most ${e.toLocaleString('en-US')} draws in either mode` : `at most ${e.toLocaleString('en-US')} draws without workers; ${q.toLocaleString('en-US')} with queue workers`;
}

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
    /**
     * Candidate factors (factor series of the run's edition); default: the run's factors. At most
     * 25 here; the server's mode may allow fewer (JOB_LIMITS: 15 without queue workers).
     */
    candidates: z
      .array(z.string().trim().min(1))
      .min(1, 'Name at least one candidate factor')
      .max(MAX_SWEEP_CANDIDATES, `The sweep takes ${sweepLimitText()}`)
      .optional(),
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

/** A date label as the editions write them: YYYY-MM or YYYY-MM-DD. */
export const DATE_LABEL = /^\d{4}-(0[1-9]|1[0-2])(-(0[1-9]|[12]\d|3[01]))?$/;

/**
 * Hold-out check (Kozak, Nagel and Santosh 2020): `split` estimates b̂ on the periods before `from`
 * (the first hold-out period, YYYY-MM[-DD]) or before the first `fraction` of the sample, and
 * prices the rest; `rolling` re-estimates on windows of `length` periods and prices the next
 * `step` periods after each.
 */
export const holdoutParamsSchema = z
  .object({
    mode: z.enum(['split', 'rolling']).default('split'),
    from: z.string().trim().regex(DATE_LABEL, 'Give the first hold-out period as YYYY-MM or YYYY-MM-DD').optional(),
    fraction: z.number().gt(0, 'The fraction is between 0 and 1').lt(1, 'The fraction is between 0 and 1').optional(),
    length: z.number().int('The window length is a whole number').min(2, 'The window is at least 2 periods').optional(),
    step: z.number().int('The step is a whole number').min(2, 'Each priced block needs at least 2 periods').optional(),
  })
  .strict()
  .superRefine((p, ctx) => {
    if (p.mode === 'split') {
      if ((p.from === undefined) === (p.fraction === undefined))
        ctx.addIssue({ code: 'custom', path: ['from'], message: 'Give either the first hold-out period (from) or the estimation fraction, not both and not neither' });
      if (p.length !== undefined || p.step !== undefined) ctx.addIssue({ code: 'custom', path: ['length'], message: 'Window length and step belong to the rolling hold-out (mode rolling)' });
    } else {
      if (p.length === undefined) ctx.addIssue({ code: 'custom', path: ['length'], message: 'The rolling hold-out needs a window length' });
      if (p.from !== undefined || p.fraction !== undefined) ctx.addIssue({ code: 'custom', path: ['from'], message: 'A split date or fraction belongs to the single hold-out (mode split)' });
    }
  });
export type HoldoutParams = z.output<typeof holdoutParamsSchema>;

export const startCheckBodySchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('bootstrap'), params: bootstrapParamsSchema.default({ draws: 999, scheme: 'iid' }) }),
  z.object({ kind: z.literal('subset-sweep'), params: subsetSweepParamsSchema.default({ topPerSize: 5 }) }),
  z.object({ kind: z.literal('rolling'), params: rollingParamsSchema }),
  z.object({ kind: z.literal('holdout'), params: holdoutParamsSchema }),
]);
export type StartCheckBody = z.input<typeof startCheckBodySchema>;
export type StartCheck = z.output<typeof startCheckBodySchema>;

export type JobParams = BootstrapParams | SubsetSweepParams | RollingParams | HoldoutParams;
export type JobResult = BootstrapJobResult | SubsetSweepJobResult | RollingJobResult | HoldoutJobResult;

const jobBaseSchema = z.object({
  id: z.number().int(),
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
});

/** A job; `result` (once finished) is checked against its kind's result schema. */
export const jobSchema = z.discriminatedUnion('kind', [
  jobBaseSchema.extend({ kind: z.literal('bootstrap'), result: bootstrapResultSchema.nullable() }),
  jobBaseSchema.extend({ kind: z.literal('subset-sweep'), result: subsetSweepResultSchema.nullable() }),
  jobBaseSchema.extend({ kind: z.literal('rolling'), result: rollingResultSchema.nullable() }),
  jobBaseSchema.extend({ kind: z.literal('holdout'), result: holdoutJobResultSchema.nullable() }),
]);
export type Job = z.infer<typeof jobSchema>;
export const jobResponseSchema = z.object({ job: jobSchema });
/** A page of jobs, newest first, without results; `nextCursor` (null on the last page) goes back as `before`. */
export const jobsResponseSchema = z.object({ jobs: z.array(jobSchema), total: z.number().int().nonnegative(), nextCursor: z.number().int().positive().nullable() });
export type JobsResponse = z.infer<typeof jobsResponseSchema>;

export const jobListQuerySchema = z.object({
  runId: z.coerce.number().int().positive().optional(),
  status: jobStatusSchema.optional(),
  /** Page size (default 200). */
  limit: z.coerce.number().int().min(1).max(500).optional(),
  /** Cursor: only jobs with an id below this one (the previous page's `nextCursor`). */
  before: z.coerce.number().int().positive().optional(),
});
export type JobListQuery = z.infer<typeof jobListQuerySchema>;
