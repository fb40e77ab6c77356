/**
 * Exports of a finished run: CSV (a keyed header block, a blank line, then one row per factor with
 * every ledger column at full precision), a LaTeX table for papers, and the full result JSON
 * (served as stored by the runs service).
 *
 * CSV. Machine-readable: every header row is `key, value[, value…]` (lists such as the test assets
 * take one cell per name); the factor table has one value per cell, numeric columns hold numbers
 * only (empty where a test is not defined; a status column says why), text columns hold words.
 * Numbers are written with JavaScript's shortest round-trip form, so parseFloat of a cell gives
 * back exactly the number in the API's JSON; they stay in the stored units (decimals per period),
 * which the header block states. Every text cell passes the one CSV-safety rule (shared/csv.ts).
 *
 * LaTeX. A `table` float with caption and label, `booktabs` rules, units in the column heads,
 * `$-$` minus signs and p printed as on screen (shared/format.ts: "< 0.001" below 0.001). λ and
 * the spanning α are in percent per period as on screen. The t and p columns are those of the
 * verdict's basis (standard, robust or bootstrap), which the caption names with the level.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { libraryEditions } from '../db/schema/index';
import type { LedgerResult, Run } from '../../shared/runs';
import { RUN_CAUTION } from '../../shared/runs';
import { toCsv, type CsvCell } from '../../shared/csv';
import { DECIMALS, P_FLOOR, formatFixed, formatP, formatPercent, type FormatStyle } from '../../shared/format';
import { ledgerWarningText } from '../../shared/gmm-messages';

type Factor = LedgerResult['factors'][number];
type Basis = LedgerResult['basis'];

/** Every column of the factor table, in CSV order. */
export const CSV_FACTOR_COLUMNS = [
  'factor',
  'traded',
  'b',
  'se_b',
  't_b',
  'p_b',
  'ci_b_low',
  'ci_b_high',
  'lambda',
  'se_lambda',
  't_lambda',
  'p_lambda',
  'ci_lambda_low',
  'ci_lambda_high',
  'robust_se_b',
  'robust_t_b',
  'robust_p_b',
  'robust_ci_b_low',
  'robust_ci_b_high',
  'robust_se_lambda',
  'robust_t_lambda',
  'robust_p_lambda',
  'robust_ci_lambda_low',
  'robust_ci_lambda_high',
  'bootstrap_p_b',
  'bootstrap_p_lambda',
  'bootstrap_p_drop',
  'drop_chi2',
  'drop_df',
  'drop_p',
  'spanning_status',
  'spanning_alpha',
  'spanning_se',
  'spanning_t',
  'spanning_p',
  'thin_beta_stat',
  'thin_beta_df',
  'thin_beta_p',
  'thin_beta_flag',
  'verdict_standard',
  'verdict_robust',
  'verdict_bootstrap',
  'verdict',
] as const;

/** Columns that hold numbers only (an empty cell where the value is not defined). */
export const CSV_NUMERIC_COLUMNS: readonly (typeof CSV_FACTOR_COLUMNS)[number][] = CSV_FACTOR_COLUMNS.filter(
  (c) => !['factor', 'traded', 'spanning_status', 'thin_beta_flag'].includes(c) && !c.startsWith('verdict'),
);

/** Columns in decimal return units per period (shown in percent on screen and in LaTeX). */
const RETURN_UNIT_COLUMNS = ['lambda', 'se_lambda', 'ci_lambda_low', 'ci_lambda_high', 'robust_se_lambda', 'robust_ci_lambda_low', 'robust_ci_lambda_high', 'spanning_alpha', 'spanning_se'];

/** Why a spanning cell is empty: computed, not traded (no spanning check), or not computed (collinear). */
export function spanningStatus(f: Factor): 'computed' | 'not traded' | 'not computed' {
  return f.spanning ? 'computed' : f.traded ? 'not computed' : 'not traded';
}

const yesNo = (b: boolean | null | undefined): string => (b === null || b === undefined ? '' : b ? 'yes' : 'no');

export function factorRow(f: Factor): CsvCell[] {
  const r = f.robust;
  const bs = f.bootstrap;
  return [
    f.name,
    yesNo(f.traded),
    f.b,
    f.seB,
    f.tB,
    f.pB,
    f.ciB[0],
    f.ciB[1],
    f.lambda,
    f.seLambda,
    f.tLambda,
    f.pLambda,
    f.ciLambda[0],
    f.ciLambda[1],
    r?.seB,
    r?.tB,
    r?.pB,
    r?.ciB[0],
    r?.ciB[1],
    r?.seLambda,
    r?.tLambda,
    r?.pLambda,
    r?.ciLambda[0],
    r?.ciLambda[1],
    bs?.pB,
    bs?.pLambda,
    bs?.pDrop,
    f.chi2Drop?.stat,
    f.chi2Drop?.df,
    f.chi2Drop?.p,
    spanningStatus(f),
    f.spanning?.alpha,
    f.spanning?.se,
    f.spanning?.t,
    f.spanning?.p,
    f.thinBeta?.stat,
    f.thinBeta?.df,
    f.thinBeta?.p,
    yesNo(f.thinBeta?.flag),
    f.verdicts.standard,
    f.verdicts.robust ?? '',
    f.verdicts.bootstrap ?? '',
    f.verdict,
  ];
}

const BASIS_WORDS: Record<Basis, string> = {
  standard: 'standard (influence-function SEs that assume the model is correctly specified)',
  robust: 'robust (misspecification-robust SEs of a first-stage run)',
  bootstrap: 'bootstrap (recentred bootstrap p-values)',
};

/** Where the requested basis and the one in use differ, why. */
function basisNote(r: LedgerResult): string {
  if (r.basis === r.verdictBasis) return '';
  if (r.basis === 'bootstrap' && !r.bootstrap) return `the bootstrap was asked for and has not finished; the verdicts rest on the ${r.verdictBasis} basis until it does`;
  if (r.basis === 'robust' && r.factors.every((f) => !f.robust)) return 'robust SEs are not available for this run; the verdicts rest on the standard basis';
  return `the verdicts rest on the ${r.verdictBasis} basis`;
}

/** Periodicity of the rows of the run's library, when the caller knows it. */
export interface ExportContext {
  readonly frequency?: 'monthly' | 'daily';
}

/** The export context of a run: the frequency of its edition (routes pass it to runCsv / runTex). */
export function exportContextFor(db: Db, editionId: number): ExportContext {
  const row = db.select({ frequency: libraryEditions.frequency }).from(libraryEditions).where(eq(libraryEditions.id, editionId)).get();
  return row && (row.frequency === 'monthly' || row.frequency === 'daily') ? { frequency: row.frequency } : {};
}

const periodWord = (ctx: ExportContext) => (ctx.frequency === 'monthly' ? 'month' : ctx.frequency === 'daily' ? 'day' : 'period');

export function runCsv(run: Run, ctx: ExportContext = {}): string {
  const r = run.result;
  if (!r) throw new Error('runCsv needs a finished run');
  const s = run.spec;
  const o = r.options;
  const bootAsked = o.bootstrap;
  const rows: CsvCell[][] = [
    ['keelson_export', 'factor ledger'],
    ['run_id', run.id],
    ['keelson_version', run.keelsonVersion],
    ['library', run.libraryName],
    ['library_id', run.libraryId],
    ['edition', run.editionNumber],
    ['edition_id', run.editionId],
    ['spec_name', run.specName ?? ''],
    ['spec', JSON.stringify(s)],
    ['author', run.authorName],
    ['finished_at', run.finishedAt ?? ''],
    ['basis', r.basis],
    ['verdict_basis', r.verdictBasis],
    ['level', o.level],
    ['verdict_column', `verdict = verdict_${r.verdictBasis}: the verdict at the level above on ${BASIS_WORDS[r.verdictBasis]} basis`],
    [
      'units_returns',
      `decimal return per ${periodWord(ctx)} (0.01 = 1%; the screen and the LaTeX table show percent) in columns ${RETURN_UNIT_COLUMNS.join(' ')}`,
    ],
    ['units_b', 'SDF loading per unit of factor value in decimals (m = 1 - b\'(f - mean f) in the centred form); se_b and ci_b_* alike'],
    ['units_tests', 't_*: z-statistics; *_chi2 and *_stat: chi-square statistics with the df beside; p_* and *_p: probabilities (0 to 1)'],
    ['T', r.T],
    ['N', r.N],
    ['K', r.K],
    ['J_stat', r.J.stat],
    ['J_df', r.J.df],
    ['J_p', r.J.p],
    ['lags', r.lags],
    ['stage', r.stage],
    ['weighting', o.weighting],
    ['form', o.form],
    ['factor_means_known', yesNo(o.factorMeansKnown)],
    ['iterations', r.iterations],
    ['converged', yesNo(r.converged)],
    ['spec_assets', ...s.assets],
    ['spec_factors', ...s.factors],
    ['spec_non_traded', ...s.nonTraded],
    ['spec_rf', s.rf ?? ''],
    ['spec_window_start', s.window?.start ?? ''],
    ['spec_window_end', s.window?.end ?? ''],
    ['spec_lags', s.lags],
    ['spec_drop_set', ...(s.dropSet ?? [])],
    ['hj_distance', r.hj],
    ['grs_stat', r.grs?.stat],
    ['grs_df1', r.grs?.df1],
    ['grs_df2', r.grs?.df2],
    ['grs_p', r.grs?.p],
    ['bootstrap_status', bootAsked ? (r.bootstrap ? 'finished' : 'pending') : 'not asked'],
    ['bootstrap_draws', r.bootstrap?.draws ?? bootAsked?.draws],
    ['bootstrap_valid_draws', r.bootstrap?.validDraws],
    ['bootstrap_scheme', r.bootstrap?.scheme ?? bootAsked?.scheme ?? ''],
    ['bootstrap_block_length', r.bootstrap?.blockLength ?? bootAsked?.blockLength],
    ['bootstrap_seed', r.bootstrap?.seed ?? bootAsked?.seed],
    ['bootstrap_p_J', r.bootstrap?.pJ],
  ];
  if (r.jointDrop) {
    rows.push(['joint_drop_set', ...r.jointDrop.factors]);
    rows.push(['joint_wald_stat', r.jointDrop.wald?.stat], ['joint_wald_df', r.jointDrop.wald?.df], ['joint_wald_p', r.jointDrop.wald?.p]);
    rows.push(['joint_drop_chi2', r.jointDrop.chi2Drop?.stat], ['joint_drop_df', r.jointDrop.chi2Drop?.df], ['joint_drop_p', r.jointDrop.chi2Drop?.p]);
    rows.push(['bootstrap_p_joint_wald', r.bootstrap?.pJointWald], ['bootstrap_p_joint_drop', r.bootstrap?.pJointDrop]);
  }
  if (r.jointSpanning) {
    rows.push(['joint_spanning_stat', r.jointSpanning.stat], ['joint_spanning_df', r.jointSpanning.df], ['joint_spanning_p', r.jointSpanning.p]);
  }
  const note = basisNote(r);
  if (note) rows.push(['basis_note', note]);
  if (r.robustNote) rows.push(['robust_note', r.robustNote]);
  if (r.caution) rows.push(['caution', r.caution]);
  if (r.lagWarning) rows.push(['lag_warning', r.lagWarning]);
  for (const w of r.warnings) rows.push(['warning', ledgerWarningText(w)]);
  rows.push(['advice', RUN_CAUTION]);
  rows.push([], [...CSV_FACTOR_COLUMNS], ...r.factors.map(factorRow));
  return toCsv(rows, '\r\n');
}

/** Escapes text for LaTeX (text mode). */
export function texEscape(s: string): string {
  return s
    .replace(/[\r\n\t]+/g, ' ')
    .replace(/[\\{}$&#^_%~<>|]/g, (c) =>
      c === '\\'
        ? '\\textbackslash{}'
        : c === '^'
          ? '\\textasciicircum{}'
          : c === '~'
            ? '\\textasciitilde{}'
            : c === '<'
              ? '\\textless{}'
              : c === '>'
                ? '\\textgreater{}'
                : c === '|'
                  ? '\\textbar{}'
                  : `\\${c}`,
    );
}

/** LaTeX style of the shared number rule: `$-$` minus, `--` for a test that is not defined, `$<$0.001`. */
const TEX: FormatStyle = { minus: '$-$', missing: '--', less: '$<$' };
const tn = (x: number | null | undefined, d: number) => formatFixed(x, d, TEX);
const tp = (p: number | null | undefined) => formatP(p, TEX);
const tpct = (x: number | null | undefined) => formatPercent(x, DECIMALS.pct, TEX);
/** The same rule inside math mode (the notes under the table): `-` is a minus there, `<` a relation. */
const MATH: FormatStyle = { minus: '-', missing: '\\mbox{--}', less: '< ' };
const mn = (x: number | null | undefined, d: number) => formatFixed(x, d, MATH);
/** "p = 0.042" or "p < 0.001" in math mode. */
const pIs = (p: number) => (p < P_FLOOR ? `p ${formatP(p, MATH)}` : `p = ${formatP(p, MATH)}`);

/** The t and p values of the verdict's basis, and whether any p had to fall back to an asymptotic one. */
interface BasisInference {
  tB: number;
  pB: number;
  tLambda: number;
  pLambda: number;
  pDrop: number | null;
  lambdaFallback: boolean;
}

function inferenceOn(basis: Basis, f: Factor, stage: LedgerResult['stage']): BasisInference {
  const asymptotic = stage === 'first' && f.robust ? f.robust : f;
  if (basis === 'robust' && f.robust) {
    return { tB: f.robust.tB, pB: f.robust.pB, tLambda: f.robust.tLambda, pLambda: f.robust.pLambda, pDrop: f.chi2Drop?.p ?? null, lambdaFallback: false };
  }
  if (basis === 'bootstrap' && f.bootstrap) {
    const bl = f.bootstrap.pLambda;
    return {
      tB: asymptotic.tB,
      pB: f.bootstrap.pB,
      tLambda: asymptotic.tLambda,
      pLambda: bl ?? asymptotic.pLambda,
      pDrop: f.bootstrap.pDrop ?? f.chi2Drop?.p ?? null,
      lambdaFallback: bl === null,
    };
  }
  return { tB: f.tB, pB: f.pB, tLambda: f.tLambda, pLambda: f.pLambda, pDrop: f.chi2Drop?.p ?? null, lambdaFallback: false };
}

/** The caption's sentence on the basis of the t and p columns. */
function basisSentence(r: LedgerResult, levelPct: string): string {
  const b = r.verdictBasis;
  let how: string;
  if (b === 'robust') how = 'the robust basis: $t$ and $p$ use misspecification-robust standard errors';
  else if (b === 'bootstrap' && r.bootstrap)
    how = `the bootstrap basis: $p$ from ${r.bootstrap.validDraws} recentred bootstrap draws (${r.bootstrap.scheme === 'block' ? `block bootstrap, blocks of ${r.bootstrap.blockLength}` : 'iid resampling'}, seed ${r.bootstrap.seed}); $t$ from the ${r.stage === 'first' && r.factors.some((f) => f.robust) ? 'robust' : 'standard'} standard errors`;
  else how = 'the standard basis: $t$ and $p$ use standard errors that assume the model is correctly specified';
  const note = basisNote(r);
  return `Verdicts at the ${levelPct}\\% level on ${how}${note ? ` (${texEscape(note)})` : ''}.`;
}

const STAGE_WORDS: Record<LedgerResult['stage'], string> = { first: 'first-stage', second: 'second-stage', iterated: 'iterated' };
const WEIGHTING_WORDS: Record<LedgerResult['options']['weighting'], string> = {
  identity: 'identity weighting',
  'second-moment': 'second-moment weighting',
  covariance: 'covariance weighting',
};

/** The factor ledger as a LaTeX `table` (needs `\usepackage{booktabs}`). */
export function runTex(run: Run, ctx: ExportContext = {}): string {
  const r = run.result;
  if (!r) throw new Error('runTex needs a finished run');
  const per = periodWord(ctx);
  const levelPct = String(Math.round(r.options.level * 1e6) / 1e4);
  const heads = [
    'Factor',
    '$b$',
    '$t(b)$',
    '$p(b)$',
    `$\\lambda$ (\\% per ${per})`,
    '$t(\\lambda)$',
    '$p(\\lambda)$',
    '$\\chi^2_{\\mathrm{drop}}$',
    '$p_{\\mathrm{drop}}$',
    `$\\alpha_{\\mathrm{span}}$ (\\% per ${per})`,
    '$t(\\alpha_{\\mathrm{span}})$',
    'Verdict',
  ];
  const colSpec = `l${'r'.repeat(heads.length - 2)}l`;
  const inf = r.factors.map((f) => inferenceOn(r.verdictBasis, f, r.stage));
  const anyFallback = inf.some((x) => x.lambdaFallback);
  const anyThin = r.factors.some((f) => f.thinBeta?.flag);
  const anyNonTraded = r.factors.some((f) => !f.traded);

  const lines: string[] = [];
  lines.push(`% Keelson ${texEscape(run.keelsonVersion)}: factor ledger of run ${run.id}.`);
  lines.push('% Needs \\usepackage{booktabs} in the preamble.');
  lines.push('% Statistical evidence about a model on past data, not investment advice.');
  lines.push('\\begin{table}[htbp]');
  lines.push('\\centering');
  lines.push('\\small');
  const caption =
    `Factor ledger of run ${run.id}: ${texEscape(run.libraryName)}, edition ${run.editionNumber}; ` +
    `$T = ${r.T}$ periods, $N = ${r.N}$ test assets, $K = ${r.K}$ factors; ${STAGE_WORDS[r.stage]} GMM, ` +
    `${r.stage === 'first' ? `${WEIGHTING_WORDS[r.options.weighting]}, ` : ''}${r.options.form} SDF, HAC lag ${r.lags}. ` +
    `${basisSentence(r, levelPct)} ` +
    `$\\lambda$ and $\\alpha_{\\mathrm{span}}$ in percent per ${per}; $b$ per unit of factor value in decimals.`;
  lines.push(`\\caption{${caption}}`);
  lines.push(`\\label{tab:keelson-run-${run.id}}`);
  lines.push(`\\begin{tabular}{${colSpec}}`);
  lines.push('\\toprule');
  lines.push(`${heads.join(' & ')} \\\\`);
  lines.push('\\midrule');
  r.factors.forEach((f, k) => {
    const x = inf[k];
    const cells = [
      texEscape(f.name) + (f.thinBeta?.flag ? '$^{\\dagger}$' : ''),
      tn(f.b, DECIMALS.b),
      tn(x.tB, DECIMALS.t),
      tp(x.pB),
      tpct(f.lambda),
      tn(x.tLambda, DECIMALS.t),
      tp(x.pLambda) + (x.lambdaFallback ? '$^{a}$' : ''),
      tn(f.chi2Drop?.stat, DECIMALS.chi2),
      tp(x.pDrop),
      f.spanning ? tpct(f.spanning.alpha) : f.traded ? '--' : 'n.t.',
      f.spanning ? tn(f.spanning.t, DECIMALS.t) : '--',
      texEscape(f.verdict),
    ];
    lines.push(`${cells.join(' & ')} \\\\`);
  });
  lines.push('\\bottomrule');
  lines.push('\\end{tabular}');

  const notes: string[] = [];
  notes.push(`$J = ${mn(r.J.stat, DECIMALS.chi2)}$ ($\\chi^2$, ${r.J.df} df), $${pIs(r.J.p)}$${r.bootstrap ? `, bootstrap $${pIs(r.bootstrap.pJ)}$` : ''}`);
  if (r.hj !== null) notes.push(`HJ distance $= ${mn(r.hj, DECIMALS.hj)}$`);
  if (r.grs) notes.push(`GRS $= ${mn(r.grs.stat, DECIMALS.chi2)}$ ($F_{${r.grs.df1},${r.grs.df2}}$), $${pIs(r.grs.p)}$`);
  if (r.jointDrop) {
    const jd = r.jointDrop;
    const parts = [`joint tests of ${jd.factors.map(texEscape).join(', ')}`];
    if (jd.wald) parts.push(`Wald $= ${mn(jd.wald.stat, DECIMALS.chi2)}$ (${jd.wald.df} df), $${pIs(jd.wald.p)}$`);
    if (jd.chi2Drop) parts.push(`drop $\\chi^2 = ${mn(jd.chi2Drop.stat, DECIMALS.chi2)}$ (${jd.chi2Drop.df} df), $${pIs(jd.chi2Drop.p)}$`);
    notes.push(parts.join(': '));
  }
  let text = `${notes.join('; ')}.`;
  if (r.stage === 'first' && r.factors.every((f) => !f.chi2Drop)) text += ' Drop tests (--) are not reported for this first-stage run.';
  if (anyThin) text += ' $^{\\dagger}$Thin-beta flag: the factor\'s $b$ and $\\lambda$ inference is unreliable.';
  if (anyFallback) text += ' $^{a}$No bootstrap $p$ for $\\lambda$; the asymptotic $p$ is shown and used in the verdict.';
  if (anyNonTraded) text += ' n.t.: not traded, no spanning check.';
  if (r.caution) text += ` ${texEscape(r.caution)}`;
  if (r.lagWarning) text += ` ${texEscape(r.lagWarning)}`;
  text += ' Statistical evidence about a model on past data, not investment advice.';
  lines.push('\\par\\smallskip');
  lines.push(`{\\footnotesize ${text}\\par}`);
  lines.push('\\end{table}');
  return lines.join('\n') + '\n';
}
