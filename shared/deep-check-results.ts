import { z } from 'zod';
import { GMM_FAILURE_CODES } from '../lib/gmm/errors';

/**
 * The results of the deep checks (issue 6) as the API sends them: zod schemas for the bootstrap,
 * the subset sweep, the rolling windows and the hold-out check (single split or rolling blocks).
 * The client and the CLI use the inferred types; the server's job runner stores lib/gmm's result
 * objects, whose shapes tests/api/deep-check-schemas.test.ts parses with these schemas.
 */

const num = z.number();
const nums = z.array(num);
const sdfForm = z.enum(['centred', 'uncentred']);
const windowKind = z.enum(['rolling', 'expanding']);

export const gmmFailureCodeSchema = z.enum(GMM_FAILURE_CODES);

// ---- bootstrap ----
const bootstrapPValueSchema = z.object({ stat: num, asymptoticP: num, bootstrapP: num, critical95: num });
const bootstrapPValueDfSchema = bootstrapPValueSchema.extend({ df: z.number().int() });

export const bootstrapResultSchema = z.object({
  T: z.number().int(),
  N: z.number().int(),
  K: z.number().int(),
  scheme: z.enum(['iid', 'block']),
  blockLength: z.number().int(),
  draws: z.number().int(),
  validDraws: z.number().int(),
  failedDraws: z.number().int(),
  seed: z.number().int(),
  lags: z.number().int(),
  stage: z.enum(['first', 'second', 'iterated']),
  form: sdfForm,
  correction: z.enum(['hall-horowitz', 'none']),
  J: bootstrapPValueDfSchema,
  factors: z.array(
    z.object({ name: z.string(), b: num, wald: bootstrapPValueSchema, lambda: bootstrapPValueSchema.nullable(), drop: bootstrapPValueSchema.nullable() }),
  ),
  joint: z.object({ factors: z.array(z.string()), wald: bootstrapPValueDfSchema.nullable(), drop: bootstrapPValueDfSchema.nullable() }).nullable(),
  jDeciles: nums,
  notes: z.array(z.string()),
});
export type BootstrapJobResult = z.infer<typeof bootstrapResultSchema>;

// ---- subset sweep ----
const sweepModelSchema = z.object({ factors: z.array(z.string()), size: z.number().int(), hj: num, drop: num, df: z.number().int(), p: num });
const sweepThetaModelSchema = z.object({ factors: z.array(z.string()), size: z.number().int(), theta: num, se: num, withinOneSe: z.boolean() });
const bySizeSchema = z.array(z.object({ size: z.number().int(), models: z.array(sweepModelSchema) }));

export const subsetSweepResultSchema = z.object({
  T: z.number().int(),
  N: z.number().int(),
  K: z.number().int(),
  lags: z.number().int(),
  level: num,
  models: z.number().int(),
  singular: z.number().int(),
  bestByHj: bySizeSchema,
  bestByDrop: bySizeSchema,
  adequate: z.array(sweepModelSchema),
  factorFrequency: z.array(z.object({ name: z.string(), share: num, count: z.number().int() })),
  candidates: z.array(z.object({ name: z.string(), traded: z.boolean().nullable(), b: num, seB: num, tB: num, pB: num, pHolm: num, pBY: num })),
  thetaRanking: z
    .object({
      candidates: z.array(z.string()),
      models: z.number().int(),
      best: sweepThetaModelSchema,
      withinOneSe: z.number().int(),
      top: z.array(sweepThetaModelSchema),
      bestBySize: z.array(sweepThetaModelSchema),
      smallestWithinOneSe: z.array(sweepThetaModelSchema),
    })
    .nullable(),
  thetaNote: z.string().nullable(),
});
export type SubsetSweepJobResult = z.infer<typeof subsetSweepResultSchema>;

// ---- rolling windows ----
/** A row that could not be computed: the library's failure shape (lib/gmm/errors.ts), words from shared/gmm-messages.ts. */
const rowFailure = { ok: z.literal(false), code: gmmFailureCodeSchema, message: z.string() };

const rollingPointValues = z.object({
  start: z.number().int(),
  end: z.number().int(),
  startDate: z.string().nullable(),
  endDate: z.string().nullable(),
  b: nums,
  seB: nums,
  tB: nums,
  lambda: nums,
  seLambda: nums,
  tLambda: nums,
  J: num,
  pJ: num,
});
/** Rolling rows stored before the one failure shape carried a free-text `reason`: read it as code not-defined. */
const legacyRollingRow = (v: unknown): unknown => {
  if (v && typeof v === 'object' && (v as { ok?: unknown }).ok === false && !('code' in v) && typeof (v as { reason?: unknown }).reason === 'string') {
    const { reason, ...rest } = v as { reason: string };
    return { ...rest, code: 'not-defined', message: reason };
  }
  return v;
};
export const rollingPointSchema = z.preprocess(
  legacyRollingRow,
  z.discriminatedUnion('ok', [rollingPointValues.extend({ ok: z.literal(true) }), rollingPointValues.extend(rowFailure)]),
);
export type RollingJobPoint = z.infer<typeof rollingPointSchema>;

export const rollingResultSchema = z.object({
  kind: windowKind,
  length: z.number().int(),
  step: z.number().int(),
  level: num,
  z: num,
  factorNames: z.array(z.string()),
  points: z.array(rollingPointSchema),
  failed: z.number().int(),
});
export type RollingJobResult = z.infer<typeof rollingResultSchema>;

// ---- hold-out check ----
export const holdoutSplitResultSchema = z.object({
  mode: z.literal('split'),
  ok: z.literal(true),
  T1: z.number().int(),
  T2: z.number().int(),
  lags: z.number().int(),
  form: sdfForm,
  b: nums,
  alpha: nums,
  holdoutMean: nums,
  predicted: nums,
  meanAbsAlpha: num,
  r2oos: num,
  r2in: num,
  sse: num,
  sst: num,
  note: z.string().nullable(),
  split: z.number().int(),
  splitDate: z.string().nullable(),
  assetNames: z.array(z.string()),
  factorNames: z.array(z.string()),
});

const rollingHoldoutRowValues = z.object({
  start: z.number().int(),
  end: z.number().int(),
  blockEnd: z.number().int(),
  blockStartDate: z.string().nullable(),
  blockEndDate: z.string().nullable(),
  b: nums,
  alpha: nums,
  meanAbsAlpha: num.nullable(),
  r2oos: num.nullable(),
  r2in: num.nullable(),
});
export const rollingHoldoutRowSchema = z.discriminatedUnion('ok', [rollingHoldoutRowValues.extend({ ok: z.literal(true) }), rollingHoldoutRowValues.extend(rowFailure)]);
export type RollingHoldoutJobRow = z.infer<typeof rollingHoldoutRowSchema>;

export const rollingHoldoutResultSchema = z.object({
  mode: z.literal('rolling'),
  kind: windowKind,
  length: z.number().int(),
  step: z.number().int(),
  lags: z.number().int(),
  form: sdfForm,
  note: z.string().nullable(),
  assetNames: z.array(z.string()),
  factorNames: z.array(z.string()),
  rows: z.array(rollingHoldoutRowSchema),
  pooledR2oos: num.nullable(),
  meanAbsAlpha: num.nullable(),
});

/** A hold-out job's result: one split, or one row per priced block. */
export const holdoutJobResultSchema = z.discriminatedUnion('mode', [holdoutSplitResultSchema, rollingHoldoutResultSchema]);
export type HoldoutJobResult = z.infer<typeof holdoutJobResultSchema>;
