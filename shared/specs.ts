/**
 * Model spec: the choice of test assets, factors and estimation options that a run estimates.
 * Used by the spec form (react-hook-form + zod resolver) and by the server.
 *
 * `modelSpecSchema` checks what can be checked without the data (no factors, a factor also chosen
 * as asset, duplicates, non-traded / drop set naming non-factors, window order).
 * `checkSpecAgainstEdition` checks the rest against an edition's series and dates (unknown series,
 * wrong kind, N < K, T ≤ N + K in the window, a HAC lag ≥ T/4, a bootstrap block > T/2); client
 * and server call the same function, so the form, POST /specs/check, POST /specs, PUT /specs/:id
 * and POST /runs refuse with the same words.
 */
import { z } from 'zod';

export const STAGES = ['first', 'second', 'iterated'] as const;
export const WEIGHTINGS = ['identity', 'second-moment', 'covariance'] as const;
/** Basis of the verdict (glossary): standard, robust (first-stage runs), bootstrap. */
export const BASES = ['standard', 'robust', 'bootstrap'] as const;
export const BOOTSTRAP_SCHEMES = ['iid', 'block'] as const;

/** Bootstrap p-values asked for in the ledger (a bootstrap deep check started with the run). */
export const specBootstrapSchema = z.object({
  draws: z.number().int('Draws are a whole number').min(99, 'Use at least 99 draws').max(10000, 'Use at most 10,000 draws').default(999),
  scheme: z.enum(BOOTSTRAP_SCHEMES).default('iid'),
  /** Block length for the block scheme; omitted: ceil(T^(1/3)). */
  blockLength: z.number().int('The block length is a whole number').min(1, 'The block length is at least 1').optional(),
  seed: z.number().int('The seed is a whole number').min(0).max(2 ** 31 - 1).default(1),
});
export const FORMS = ['centred', 'uncentred'] as const;

const LAG_WHOLE = 'The HAC lag is a whole number of periods (0, 1, 2, …) or auto';

/** One message for every malformed lag: 1.5, "5", null, "six". */
function lagError(iss: { input?: unknown }): string {
  const v = iss.input;
  if (typeof v === 'number') return Number.isFinite(v) ? `${LAG_WHOLE}; ${v} is not a whole number` : LAG_WHOLE;
  if (typeof v === 'string') {
    const t = v.trim();
    if (/^\d+$/.test(t)) return `${LAG_WHOLE}; send ${t} as a number, not as the text "${t}"`;
    if (/^[+-]?\d*\.\d+$/.test(t)) return `${LAG_WHOLE}; ${t} is not a whole number`;
    return `${LAG_WHOLE}; got the text "${v.slice(0, 20)}"`;
  }
  return LAG_WHOLE;
}

const isoDate = z.string().regex(/^\d{4}-\d{2}(-\d{2})?$/, 'Use a date such as 2010-01-31 or 2010-01');
const seriesName = z.string().trim().min(1, 'A series name is empty');

export const specWindowSchema = z.object({
  start: isoDate.optional(),
  end: isoDate.optional(),
});

function duplicates(xs: readonly string[]): string[] {
  const seen = new Set<string>();
  const dup = new Set<string>();
  for (const x of xs) (seen.has(x) ? dup : seen).add(x);
  return [...dup];
}

export const modelSpecSchema = z
  .object({
    /** Test-asset series names (the N). */
    assets: z.array(seriesName).min(1, 'Choose at least one test asset'),
    /** Factor series names (the K). */
    factors: z.array(seriesName).min(1, 'Choose at least one factor'),
    /** Factors that are not excess returns (no spanning check, no GRS). */
    nonTraded: z.array(seriesName).default([]),
    stage: z.enum(STAGES).default('second'),
    /** First-stage weighting matrix. */
    weighting: z.enum(WEIGHTINGS).default('identity'),
    /** HAC (Newey–West) lag: 'auto' for floor(4 (T/100)^(2/9)), or a whole number. */
    lags: z
      .union([z.literal('auto'), z.number().int(LAG_WHOLE).min(0, 'The lag is 0 or more').max(120, 'The lag is at most 120')], { error: lagError })
      .default('auto'),
    form: z.enum(FORMS).default('centred'),
    factorMeansKnown: z.boolean().default(false),
    /** Significance level of the verdicts, e.g. 0.05. */
    level: z.number().gt(0, 'The level is above 0').max(0.5, 'The level is at most 0.5').default(0.05),
    window: specWindowSchema.optional(),
    /** Risk-free series subtracted from every test asset (when the assets are raw returns). */
    rf: seriesName.optional(),
    /** Factors to test jointly (Wald on b and χ² drop test). */
    dropSet: z.array(seriesName).optional(),
    /** Basis of the verdict; omitted: robust for a first-stage spec, standard otherwise (see resolveBasis). */
    basis: z.enum(BASES).optional(),
    /** Bootstrap p-values in the ledger; required (defaults filled) when basis is bootstrap. */
    bootstrap: specBootstrapSchema.optional(),
  })
  .superRefine((s, ctx) => {
    for (const d of duplicates(s.assets)) ctx.addIssue({ code: 'custom', path: ['assets'], message: `The test asset '${d}' is chosen twice` });
    for (const d of duplicates(s.factors)) ctx.addIssue({ code: 'custom', path: ['factors'], message: `The factor '${d}' is chosen twice` });
    for (const f of s.factors)
      if (s.assets.includes(f)) ctx.addIssue({ code: 'custom', path: ['factors'], message: `'${f}' is chosen both as a factor and as a test asset` });
    for (const f of s.nonTraded)
      if (!s.factors.includes(f)) ctx.addIssue({ code: 'custom', path: ['nonTraded'], message: `'${f}' is marked not traded but is not a chosen factor` });
    if (s.dropSet) {
      if (s.dropSet.length === 0) ctx.addIssue({ code: 'custom', path: ['dropSet'], message: 'The joint drop set, when given, names at least one factor' });
      for (const f of s.dropSet)
        if (!s.factors.includes(f)) ctx.addIssue({ code: 'custom', path: ['dropSet'], message: `The drop set names '${f}', which is not a chosen factor` });
      for (const d of duplicates(s.dropSet)) ctx.addIssue({ code: 'custom', path: ['dropSet'], message: `The drop set names '${d}' twice` });
    }
    if (s.rf && (s.assets.includes(s.rf) || s.factors.includes(s.rf)))
      ctx.addIssue({ code: 'custom', path: ['rf'], message: `The risk-free series '${s.rf}' cannot also be a test asset or a factor` });
    if (s.basis === 'robust' && s.stage !== 'first')
      ctx.addIssue({
        code: 'custom',
        path: ['basis'],
        message:
          'The robust basis needs a first-stage run: misspecification-robust SEs need a weighting that does not depend on b. Set the stage to first, or choose the standard or bootstrap basis.',
      });
    if (s.basis === 'bootstrap' && !s.bootstrap)
      ctx.addIssue({ code: 'custom', path: ['bootstrap'], message: 'The bootstrap basis needs bootstrap settings (draws, scheme, seed)' });
    if (s.window?.start && s.window?.end && s.window.start > s.window.end)
      ctx.addIssue({ code: 'custom', path: ['window', 'end'], message: 'The window ends before it starts' });
  });

/** The basis a spec's verdicts rest on: its own choice, else robust for first-stage, standard otherwise. */
export function resolveBasis(spec: { stage?: (typeof STAGES)[number]; basis?: (typeof BASES)[number] }): (typeof BASES)[number] {
  return spec.basis ?? ((spec.stage ?? 'second') === 'first' ? 'robust' : 'standard');
}

/** What a client sends (defaults may be left out). */
export type ModelSpecInput = z.input<typeof modelSpecSchema>;
/** A complete spec, as stored and frozen into a run. */
export type ModelSpec = z.output<typeof modelSpecSchema>;

export const specNameSchema = z.string().trim().min(1, 'Give the spec a name').max(120, 'Use at most 120 characters');

export const createSpecBodySchema = z.object({
  name: specNameSchema,
  editionId: z.number().int().positive(),
  spec: modelSpecSchema,
});
export type CreateSpecBody = z.input<typeof createSpecBodySchema>;

export const updateSpecBodySchema = z
  .object({ name: specNameSchema.optional(), editionId: z.number().int().positive().optional(), spec: modelSpecSchema.optional() })
  .refine((v) => v.name !== undefined || v.editionId !== undefined || v.spec !== undefined, 'Give a name, an edition or a spec');

export const copySpecBodySchema = z.object({ name: specNameSchema.optional() });

export const savedSpecSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  authorId: z.number().int(),
  authorName: z.string(),
  editionId: z.number().int(),
  libraryId: z.number().int(),
  libraryName: z.string(),
  editionNumber: z.number().int(),
  spec: modelSpecSchema,
  copiedFromId: z.number().int().nullable(),
  /** When the spec was archived (hidden from the list; its runs stay readable), else null. */
  archivedAt: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type SavedSpec = z.infer<typeof savedSpecSchema>;
export const specResponseSchema = z.object({ spec: savedSpecSchema });
export const specsResponseSchema = z.object({ specs: z.array(savedSpecSchema) });

/** The words every refusal of N < K starts with (form, spec check, spec save, run start). */
export const FEWER_ASSETS_THAN_FACTORS = 'Fewer test assets than factors';

function fmtQuarter(T: number): string {
  return Number.isInteger(T / 4) ? String(T / 4) : (T / 4).toFixed(2);
}

/** What `checkSpecAgainstEdition` needs of an edition. */
export interface EditionShape {
  dates: readonly string[];
  series: readonly { name: string; kind: 'asset' | 'factor' | 'rf' }[];
}

export interface SpecCheckIssue {
  path: (string | number)[];
  message: string;
}

export interface SpecCheck {
  /** Periods in the window. */
  T: number;
  N: number;
  K: number;
  /** Degrees of freedom of the J test, N − K. */
  df: number;
  /** First and last date in the window (null when the window is empty). */
  start: string | null;
  end: string | null;
  issues: SpecCheckIssue[];
}

/** Indices [from, to) of the edition's dates inside the spec's window. */
export function windowRange(dates: readonly string[], window?: { start?: string; end?: string }): [number, number] {
  let from = 0;
  let to = dates.length;
  if (window?.start) while (from < to && dates[from] < window.start) from += 1;
  if (window?.end) while (to > from && dates[to - 1] > window.end) to -= 1;
  return [from, to];
}

/**
 * The automatic HAC lag floor(4 (T/100)^(2/9)) (Newey and West 1994 discuss automatic selection;
 * this plug-in is common practice). The same rule as lib/gmm/hac.ts `defaultLag` (a test pins
 * the two equal); repeated here so the form does not load the estimator.
 */
export function autoLag(T: number): number {
  if (!(T > 0)) return 0;
  return Math.floor(4 * Math.pow(T / 100, 2 / 9));
}

/** Largest HAC lag allowed for T periods: methods.md refuses L ≥ T/4, so the largest L < T/4. */
export function maxLagFor(T: number): number {
  return Math.max(0, Math.ceil(T / 4) - 1);
}

/** Largest bootstrap block length for T periods (the deep check refuses blocks longer than T/2). */
export function maxBlockLengthFor(T: number): number {
  return Math.floor(T / 2);
}

/**
 * Checks a spec against an edition: each named series exists and has the right kind, there are
 * at least as many test assets as factors (N = K is exactly identified), the window leaves
 * T > N + K periods (GMM needs more periods than assets plus factors), the HAC lag is below T/4
 * (methods.md) and a bootstrap block is at most T/2 long.
 */
export function checkSpecAgainstEdition(spec: ModelSpecInput, ed: EditionShape): SpecCheck {
  const issues: SpecCheckIssue[] = [];
  const kindOf = new Map(ed.series.map((s) => [s.name, s.kind]));
  const assets = spec.assets ?? [];
  const factors = spec.factors ?? [];
  const [from, to] = windowRange(ed.dates, spec.window);
  const T = Math.max(0, to - from);
  const N = assets.length;
  const K = factors.length;
  assets.forEach((a, i) => {
    const k = kindOf.get(a);
    if (!k) issues.push({ path: ['assets', i], message: `The edition has no series '${a}'` });
    else if (k === 'rf') issues.push({ path: ['assets', i], message: `'${a}' is the risk-free series, not a test asset` });
  });
  factors.forEach((f, i) => {
    const k = kindOf.get(f);
    if (!k) issues.push({ path: ['factors', i], message: `The edition has no series '${f}'` });
    else if (k === 'rf') issues.push({ path: ['factors', i], message: `'${f}' is the risk-free series, not a factor` });
  });
  if (spec.rf) {
    const k = kindOf.get(spec.rf);
    if (!k) issues.push({ path: ['rf'], message: `The edition has no series '${spec.rf}'` });
  }
  if (K === 0) issues.push({ path: ['factors'], message: 'Choose at least one factor' });
  if (N === 0) issues.push({ path: ['assets'], message: 'Choose at least one test asset' });
  if (N > 0 && K > 0 && N < K)
    issues.push({
      path: ['assets'],
      message: `${FEWER_ASSETS_THAN_FACTORS}: N = ${N} test asset${N === 1 ? '' : 's'}, K = ${K} factors. Choose at least ${K} test assets or fewer factors (N = K is allowed: the model is exactly identified and J has no degrees of freedom)`,
    });
  if (T === 0) issues.push({ path: ['window'], message: 'The window holds no dates of this edition' });
  else if (N + K > 0 && T <= N + K)
    issues.push({ path: ['window'], message: `T = ${T} periods is too few for N = ${N} assets and K = ${K} factors: need T > N + K = ${N + K}` });
  if (T > 0) {
    const maxLag = maxLagFor(T);
    if (typeof spec.lags === 'number' && Number.isInteger(spec.lags) && spec.lags > maxLag)
      issues.push({
        path: ['lags'],
        message: `A HAC lag of ${spec.lags} is too long for T = ${T} periods: the lag must be below T/4 = ${fmtQuarter(T)}, so the largest allowed is ${maxLag}`,
      });
    else if ((spec.lags ?? 'auto') === 'auto' && autoLag(T) > maxLag)
      issues.push({
        path: ['lags'],
        message: `The automatic HAC lag (${autoLag(T)}) is too long for T = ${T} periods: the lag must be below T/4 = ${fmtQuarter(T)}; set a lag of at most ${maxLag}`,
      });
    const boot = spec.bootstrap;
    if (boot && (boot.scheme ?? 'iid') === 'block' && boot.blockLength !== undefined && boot.blockLength > maxBlockLengthFor(T))
      issues.push({
        path: ['bootstrap', 'blockLength'],
        message: `A bootstrap block of ${boot.blockLength} periods is too long for T = ${T}: the largest allowed is T/2 = ${maxBlockLengthFor(T)}`,
      });
  }
  return { T, N, K, df: N - K, start: T > 0 ? ed.dates[from] : null, end: T > 0 ? ed.dates[to - 1] : null, issues };
}

/** One line per option, shown under each field of the spec form. */
export const SPEC_HELP = {
  library: 'The return library and edition whose series the model uses.',
  assets: 'Test assets: the N portfolios whose mean excess returns the model must price.',
  factors: 'Factors: the K series that make up the SDF, m = 1 − b′(f − μ).',
  nonTraded: 'Mark factors that are not excess returns; they get no spanning check and no GRS test.',
  rf: 'Optional risk-free series, subtracted from each test asset when the assets are raw returns.',
  window: 'Sample window: only dates inside it are used. Leave empty for the whole edition.',
  form: 'Centred: m = 1 − b′(f − μ), λ = Σ_f b. Uncentred: m = 1 − b′f.',
  stage: 'First stage uses a fixed weighting; second re-weights by the inverse long-run covariance; iterated repeats until b settles.',
  weighting:
    'First-stage weighting: identity (equal weight on each pricing error), the inverse second-moment matrix of returns, or the inverse covariance matrix of returns.',
  basis: 'Which p-values the verdicts rest on: standard, robust (misspecification-robust, first stage only) or bootstrap.',
  bootstrap: 'Bootstrap p-values beside the asymptotic ones: a background check started with the run (draws, iid or block resampling, seed).',
  factorMeansKnown: 'Estimated (default) corrects standard errors for the sampling error of the factor means.',
  lags: 'Newey–West lag for every long-run covariance; auto uses floor(4 (T/100)^(2/9)).',
  level: 'Significance level for the verdicts (needed / priced) and confidence intervals.',
  dropSet: 'Optional set of factors for a joint drop test (χ² difference with common weighting).',
} as const;

/** GET /specs query (strings, as Express hands them over). */
export const specListQuerySchema = z.object({
  mine: z.enum(['true', 'false']).optional(),
  editionId: z.coerce.number().int().positive().optional(),
  /** true: list archived specs too. */
  archived: z.enum(['true', 'false']).optional(),
});
export type SpecListQuery = z.infer<typeof specListQuerySchema>;

/** POST /specs/check body: a spec checked against an edition without saving it. */
export const checkSpecBodySchema = z.object({ editionId: z.number().int().positive(), spec: modelSpecSchema });
export type CheckSpecBody = z.infer<typeof checkSpecBodySchema>;
