/**
 * Runs, their review and compare: request and response shapes shared by client and server.
 */
import { z } from 'zod';
import { BASES, modelSpecSchema, savedSpecSchema, specBootstrapSchema } from './specs';
import { ledgerResultSchema, type LedgerResultParsed } from './ledger';

/** estimateLedger's output as the API carries it (schema in shared/ledger.ts). */
export type LedgerResult = LedgerResultParsed;

export const RUN_STATUSES = ['queued', 'running', 'finished', 'failed', 'cancelled'] as const;
export const runStatusSchema = z.enum(RUN_STATUSES);
export type RunStatus = z.infer<typeof runStatusSchema>;

export const SIGNOFF_DECISIONS = ['approved', 'changes-requested'] as const;
export const signoffDecisionSchema = z.enum(SIGNOFF_DECISIONS);
export type SignoffDecision = z.infer<typeof signoffDecisionSchema>;

/** Where a run stands in review: nobody asked, a sign-off is awaited, or the latest decision. */
export const SIGNOFF_STATES = ['none', 'requested', 'approved', 'changes-requested'] as const;
export const signoffStateSchema = z.enum(SIGNOFF_STATES);
export type SignoffState = z.infer<typeof signoffStateSchema>;

export const SIGNOFF_STATE_LABELS: Readonly<Record<SignoffState, string>> = {
  none: 'no sign-off asked',
  requested: 'sign-off requested',
  approved: 'approved',
  'changes-requested': 'changes requested',
};

/** `POST /api/v1/runs`: a spec inline with its edition, or a saved spec (optionally on another edition). */
export const createRunBodySchema = z
  .object({
    specId: z.number().int().positive().optional(),
    editionId: z.number().int().positive().optional(),
    spec: modelSpecSchema.optional(),
    name: z.string().trim().max(120).optional(),
  })
  .strict()
  .superRefine((b, ctx) => {
    if (b.specId !== undefined && b.spec !== undefined)
      ctx.addIssue({ code: 'custom', path: ['spec'], message: 'Give either a saved spec (specId) or a spec, not both' });
    if (b.specId === undefined && b.spec === undefined) ctx.addIssue({ code: 'custom', path: ['spec'], message: 'Give a spec with its editionId, or a specId' });
    if (b.spec !== undefined && b.editionId === undefined) ctx.addIssue({ code: 'custom', path: ['editionId'], message: 'Give the editionId the spec runs on' });
  });
export type CreateRunBody = z.input<typeof createRunBodySchema>;


export const runSummarySchema = z.object({
  id: z.number().int(),
  status: runStatusSchema,
  specId: z.number().int().nullable(),
  specName: z.string().nullable(),
  editionId: z.number().int(),
  libraryId: z.number().int(),
  libraryName: z.string(),
  editionNumber: z.number().int(),
  authorId: z.number().int(),
  authorName: z.string(),
  keelsonVersion: z.string(),
  error: z.string().nullable(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
  signoff: signoffStateSchema,
  /** N, K, T and J p-value for lists (null when the run did not finish). */
  N: z.number().int().nullable(),
  K: z.number().int().nullable(),
  T: z.number().int().nullable(),
  factors: z.array(z.string()),
  /**
   * The bootstrap deep check started with the run when its spec asks for bootstrap p-values
   * (null otherwise). While it runs, result.options.bootstrap is set and result.bootstrap is null;
   * when it finishes the run's result carries the bootstrap p-values (written once).
   */
  bootstrapJobId: z.number().int().nullable(),
});
export type RunSummary = z.infer<typeof runSummarySchema>;

export const runSchema = runSummarySchema.extend({
  spec: modelSpecSchema,
  result: ledgerResultSchema.nullable(),
});
export type Run = z.infer<typeof runSchema>;

export const runResponseSchema = z.object({ run: runSchema });

/** `POST /runs/:id/basis`: a new run of the same spec and edition on another basis (runs stay immutable). */
export const changeBasisBodySchema = z
  .object({
    basis: z.enum(BASES, { error: 'The basis is standard, robust or bootstrap' }),
    /** Bootstrap settings; omitted: the run's own, else the defaults (999 draws, iid, seed 1). */
    bootstrap: specBootstrapSchema.optional(),
  })
  .strict();
export type ChangeBasisBody = z.input<typeof changeBasisBodySchema>;

/** `POST /runs/:id/first-stage-copy` answers the new run and, when the run came from a saved spec, the new saved spec. */
export const firstStageCopyResponseSchema = z.object({ run: runSchema, spec: savedSpecSchema.nullable() });
export type FirstStageCopyResponse = z.infer<typeof firstStageCopyResponseSchema>;
/**
 * A page of runs, newest first: `total` counts every run the filter matches that the caller may read;
 * `nextCursor` (null on the last page) goes back as `before` for the next page.
 */
export const runsResponseSchema = z.object({ runs: z.array(runSummarySchema), total: z.number().int().nonnegative(), nextCursor: z.number().int().positive().nullable() });
export type RunsResponse = z.infer<typeof runsResponseSchema>;

export const runListQuerySchema = z.object({
  specId: z.coerce.number().int().positive().optional(),
  libraryId: z.coerce.number().int().positive().optional(),
  editionId: z.coerce.number().int().positive().optional(),
  status: runStatusSchema.optional(),
  authorId: z.coerce.number().int().positive().optional(),
  signoff: signoffStateSchema.optional(),
  /** Runs with exactly this many test assets (N), factors (K) or periods (T). */
  N: z.coerce.number().int().positive().optional(),
  K: z.coerce.number().int().positive().optional(),
  T: z.coerce.number().int().positive().optional(),
  /** Page size (default 200). */
  limit: z.coerce.number().int().min(1).max(500).optional(),
  /** Cursor: only runs with an id below this one (the previous page's `nextCursor`). */
  before: z.coerce.number().int().positive().optional(),
});
export type RunListQuery = z.infer<typeof runListQuerySchema>;

// ---- review ----

export const commentBodySchema = z.object({ text: z.string().trim().min(1, 'Write a comment').max(4000, 'Use at most 4000 characters') });
export const signoffBodySchema = z.object({
  decision: signoffDecisionSchema,
  note: z.string().trim().max(4000).optional(),
});
export const signoffRequestBodySchema = z.object({
  reviewerId: z.number().int().positive(),
  note: z.string().trim().max(1000).optional(),
});

export const runCommentSchema = z.object({
  id: z.number().int(),
  runId: z.number().int(),
  authorId: z.number().int(),
  authorName: z.string(),
  text: z.string(),
  createdAt: z.string(),
});
export type RunComment = z.infer<typeof runCommentSchema>;

export const signoffSchema = z.object({
  id: z.number().int(),
  runId: z.number().int(),
  reviewerId: z.number().int(),
  reviewerName: z.string(),
  decision: signoffDecisionSchema,
  note: z.string().nullable(),
  createdAt: z.string(),
});
export type Signoff = z.infer<typeof signoffSchema>;

export const signoffRequestSchema = z.object({
  id: z.number().int(),
  runId: z.number().int(),
  reviewerId: z.number().int(),
  reviewerName: z.string(),
  requestedById: z.number().int(),
  requestedByName: z.string(),
  note: z.string().nullable(),
  answeredAt: z.string().nullable(),
  createdAt: z.string(),
});
export type SignoffRequest = z.infer<typeof signoffRequestSchema>;

export const runReviewSchema = z.object({
  runId: z.number().int(),
  state: signoffStateSchema,
  comments: z.array(runCommentSchema),
  signoffs: z.array(signoffSchema),
  requests: z.array(signoffRequestSchema),
});
export type RunReview = z.infer<typeof runReviewSchema>;
export const runReviewResponseSchema = z.object({ review: runReviewSchema });

export const reviewerSchema = z.object({ id: z.number().int(), name: z.string(), role: z.string() });
export const reviewersResponseSchema = z.object({ reviewers: z.array(reviewerSchema) });

export const reviewQueueSchema = z.object({
  /** Pending requests addressed to me, with their runs. */
  awaiting: z.array(z.object({ request: signoffRequestSchema, run: runSummarySchema })),
  /** Pending requests I made. */
  requestedByMe: z.array(z.object({ request: signoffRequestSchema, run: runSummarySchema })),
  /** Latest sign-offs on runs I can read. */
  recent: z.array(z.object({ signoff: signoffSchema, run: runSummarySchema })),
});
export type ReviewQueue = z.infer<typeof reviewQueueSchema>;

// ---- compare ----

export const compareQuerySchema = z.object({
  a: z.coerce.number().int().positive('Give run a'),
  b: z.coerce.number().int().positive('Give run b'),
  /**
   * `sharpe`: the caller needs the model-comparison test; a pair it does not apply to (different
   * editions, assets or windows, a non-traded factor) is refused with the error envelope (422)
   * instead of coming back with `sharpe: null` and the reason in `sharpeRefusal`.
   */
  require: z.enum(['sharpe']).optional(),
});

/** One model's squared Sharpe ratio θ̂ = μ'Σ_f⁻¹μ with its HAC standard error (lib/gmm sharpe.ts). */
export const squaredSharpeSchema = z.object({ factors: z.array(z.string()), theta: z.number(), se: z.number() });

/**
 * The non-nested comparison of two models by their factors' squared Sharpe ratios (Barillas, Kan,
 * Robotti and Shanken 2020): diff = θ̂_A − θ̂_B, its HAC standard error, z and the two-sided p.
 */
export const sharpeTestSchema = z.object({
  a: squaredSharpeSchema,
  b: squaredSharpeSchema,
  diff: z.number(),
  se: z.number(),
  z: z.number(),
  p: z.number(),
  /** Factors in both models (the test allows them; the screen says so beside it). */
  shared: z.array(z.string()),
  T: z.number().int(),
  lags: z.number().int(),
});
export type SharpeTest = z.infer<typeof sharpeTestSchema>;

/** Nested models: the joint spanning test of the larger model's extra factors on the smaller model's, and why it replaces the z test. */
export const sharpeSpanningSchema = z.object({
  reason: z.string(),
  a: squaredSharpeSchema,
  b: squaredSharpeSchema,
  /** Which run's factors hold the other's. */
  larger: z.enum(['a', 'b']),
  factors: z.array(z.string()),
  on: z.array(z.string()),
  /** Spanning α per extra factor (decimals per period). */
  alpha: z.array(z.number()),
  stat: z.number(),
  df: z.number().int(),
  p: z.number(),
  shared: z.array(z.string()),
  T: z.number().int(),
  lags: z.number().int(),
});
export type SharpeSpanning = z.infer<typeof sharpeSpanningSchema>;

export const nestedTestSchema = z.object({
  nested: z.boolean(),
  /** Why the runs are not nested, or why no test is given. */
  reason: z.string().nullable(),
  smallerRunId: z.number().int().nullable(),
  largerRunId: z.number().int().nullable(),
  /** Factors in the larger model but not the smaller. */
  dropped: z.array(z.string()),
  /** χ² difference with the larger model's second-stage weighting. */
  test: z.object({ stat: z.number(), df: z.number(), p: z.number() }).nullable(),
});
export type NestedTest = z.infer<typeof nestedTestSchema>;

/** The basis a run's verdicts were asked on and the one they rest on now (null: the run has no result). */
export const runBasisSchema = z.object({ basis: z.enum(BASES), verdictBasis: z.enum(BASES) }).nullable();

export const compareResponseSchema = z.object({
  a: runSchema,
  b: runSchema,
  nested: nestedTestSchema,
  /** Each run's basis and verdict basis (also in a.result / b.result). */
  bases: z.object({ a: runBasisSchema, b: runBasisSchema }),
  /** Set when the two runs' verdicts rest on different bases, so they are not read as like for like. */
  basisNote: z.string().nullable(),
  /** The squared-Sharpe z test (non-nested models, all factors traded); null when it does not apply. */
  sharpe: sharpeTestSchema.nullable(),
  /** For nested models: the joint spanning test that answers the same question. */
  sharpeSpanning: sharpeSpanningSchema.nullable(),
  /** Why neither test is given (error-envelope code and message: 'unprocessable' refusals, 'degenerate', 'singular'). */
  sharpeRefusal: z.object({ code: z.string(), message: z.string() }).nullable(),
});
export type CompareResponse = z.infer<typeof compareResponseSchema>;

/** The caution shown once per run, where users act on results. */
export const RUN_CAUTION =
  'These results are statistical evidence about a model on past data, not investment advice. ' +
  'Asymptotic p-values can mislead in small samples or with many test assets. ' +
  'For factors with a thin-beta flag, λ and b inference is unreliable.';
