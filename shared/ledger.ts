import { z } from 'zod';
import { LEDGER_WARNING_CODES } from '../lib/gmm/errors';

/**
 * Schema of the factor ledger: exactly the output of `estimateLedger` in lib/gmm/ledger.ts (and
 * of `npx keelson estimate --json`). Every number is finite (the library never emits NaN);
 * `null` marks a test that does not apply (drop tests at the first stage, spanning for a
 * non-traded factor, GRS unless every factor is traded) or could not be computed.
 */
const finite = z.number().refine(Number.isFinite, 'must be a finite number');
const prob = finite.refine((p) => p >= 0 && p <= 1, 'must be a probability');
const nonNeg = finite.refine((v) => v >= 0, 'must be ≥ 0');

export const stageSchema = z.enum(['first', 'second', 'iterated']);
export const weightingSchema = z.enum(['identity', 'second-moment', 'covariance']);
export const basisSchema = z.enum(['standard', 'robust', 'bootstrap']);
export const bootstrapSchemeSchema = z.enum(['iid', 'block']);
export const bootstrapSettingsSchema = z.object({
  draws: z.number().int().positive(),
  scheme: bootstrapSchemeSchema,
  blockLength: z.number().int().positive().optional(),
  seed: z.number().int(),
});
export const sdfFormSchema = z.enum(['centred', 'uncentred']);
export const verdictSchema = z.enum(['needed and priced', 'priced, not needed', 'needed, not priced alone', 'neither']);

export const chiSquareTestSchema = z.object({ stat: nonNeg, df: z.number().int().min(0), p: prob });

export const ledgerFactorSchema = z.object({
  name: z.string(),
  traded: z.boolean(),
  b: finite,
  seB: nonNeg,
  tB: finite,
  pB: prob,
  ciB: z.tuple([finite, finite]),
  lambda: finite,
  seLambda: nonNeg,
  tLambda: finite,
  pLambda: prob,
  ciLambda: z.tuple([finite, finite]),
  chi2Drop: chiSquareTestSchema.nullable(),
  spanning: z.object({ alpha: finite, se: nonNeg, t: finite, p: prob }).nullable(),
  thinBeta: z.object({ stat: nonNeg, df: z.number().int().min(1), p: prob, flag: z.boolean() }).nullable(),
  robust: z
    .object({
      seB: nonNeg,
      tB: finite,
      pB: prob,
      ciB: z.tuple([finite, finite]),
      seLambda: nonNeg,
      tLambda: finite,
      pLambda: prob,
      ciLambda: z.tuple([finite, finite]),
    })
    .nullable(),
  bootstrap: z.object({ pB: prob, pLambda: prob.nullable(), pDrop: prob.nullable() }).nullable(),
  verdicts: z.object({ standard: verdictSchema, robust: verdictSchema.nullable(), bootstrap: verdictSchema.nullable() }),
  verdict: verdictSchema,
  /** Holm and Benjamini–Yekutieli adjusted p of the b test across the ledger's factors (on `adjustedBasis`). */
  pHolm: prob,
  pBY: prob,
});

export const ledgerPricingErrorSchema = z.object({
  asset: z.string(),
  alpha: finite,
  se: nonNeg,
  t: finite,
  meanReturn: finite,
  predicted: finite,
});

export const fmCoefficientSchema = z.object({
  name: z.string(),
  lambda: finite,
  se: nonNeg,
  t: finite,
  p: prob,
  seShanken: nonNeg,
  tShanken: finite,
  pShanken: prob,
});

export const famaMacBethSchema = z.object({
  intercept: z.boolean(),
  factors: z.array(fmCoefficientSchema),
  zeroBeta: fmCoefficientSchema.nullable(),
  shankenC: nonNeg,
});

export const ledgerResultSchema = z.object({
  T: z.number().int().positive(),
  N: z.number().int().positive(),
  K: z.number().int().positive(),
  lags: z.number().int().min(0),
  stage: stageSchema,
  iterations: z.number().int().min(0),
  converged: z.boolean(),
  factors: z.array(ledgerFactorSchema),
  pricingErrors: z.array(ledgerPricingErrorSchema),
  J: chiSquareTestSchema,
  hj: nonNeg.nullable(),
  grs: z.object({ stat: nonNeg, df1: z.number().int().positive(), df2: z.number().int().positive(), p: prob }).nullable(),
  famaMacBeth: famaMacBethSchema.nullable(),
  jointDrop: z
    .object({ factors: z.array(z.string()), wald: chiSquareTestSchema.nullable(), chi2Drop: chiSquareTestSchema.nullable() })
    .nullable(),
  jointSpanning: z
    .object({ factors: z.array(z.string()), alpha: z.array(finite), stat: nonNeg, df: z.number().int().positive(), p: prob })
    .nullable(),
  basis: basisSchema,
  verdictBasis: basisSchema,
  robustNote: z.string().nullable(),
  bootstrap: z
    .object({
      draws: z.number().int().positive(),
      validDraws: z.number().int().min(0),
      scheme: bootstrapSchemeSchema,
      blockLength: z.number().int().positive(),
      seed: z.number().int(),
      pJ: prob,
      pJointWald: prob.nullable(),
      pJointDrop: prob.nullable(),
    })
    .nullable(),
  caution: z.string().nullable(),
  lagWarning: z.string().nullable(),
  adjustedBasis: z.enum(['standard', 'robust']),
  options: z.object({
    stage: stageSchema,
    weighting: weightingSchema,
    lags: z.number().int().min(0),
    form: sdfFormSchema,
    factorMeansKnown: z.boolean(),
    level: finite.refine((v) => v > 0 && v < 1, 'must be in (0, 1)'),
    dropSet: z.array(z.string()),
    fmIntercept: z.boolean(),
    basis: basisSchema,
    bootstrap: bootstrapSettingsSchema.nullable(),
  }),
  // { code, message } (lib/gmm/errors.ts); ledgers stored before warnings had codes hold plain
  // strings, read as code 'note'.
  warnings: z.array(
    z.preprocess(
      (w) => (typeof w === 'string' ? { code: 'note', message: w } : w),
      z.object({ code: z.enum(LEDGER_WARNING_CODES), message: z.string() }),
    ),
  ),
});

export type LedgerResultParsed = z.infer<typeof ledgerResultSchema>;
export type LedgerFactorParsed = z.infer<typeof ledgerFactorSchema>;
