/**
 * Exports of a finished run: CSV (a header block, then one row per factor with every ledger
 * column at full precision), a LaTeX table, and the full result JSON (served as stored).
 *
 * Full precision: numbers are written with JavaScript's shortest round-trip form (String(x)), so
 * parseFloat of a CSV cell gives back exactly the number in the API's JSON.
 */
import Papa from 'papaparse';
import type { LedgerResult, Run } from '../../shared/runs';
import { RUN_CAUTION } from '../../shared/runs';

const num = (x: number | null | undefined): string => (x === null || x === undefined ? '' : String(x));

/** Every column of the factor ledger, in CSV order. */
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
  'drop_chi2',
  'drop_df',
  'drop_p',
  'spanning_alpha',
  'spanning_se',
  'spanning_t',
  'spanning_p',
  'thin_beta_stat',
  'thin_beta_df',
  'thin_beta_p',
  'thin_beta_flag',
  'verdict',
] as const;

function factorRow(f: LedgerResult['factors'][number]): string[] {
  return [
    f.name,
    f.traded ? 'yes' : 'no',
    num(f.b),
    num(f.seB),
    num(f.tB),
    num(f.pB),
    num(f.ciB?.[0]),
    num(f.ciB?.[1]),
    num(f.lambda),
    num(f.seLambda),
    num(f.tLambda),
    num(f.pLambda),
    num(f.ciLambda?.[0]),
    num(f.ciLambda?.[1]),
    num(f.chi2Drop?.stat),
    num(f.chi2Drop?.df),
    num(f.chi2Drop?.p),
    f.spanning ? num(f.spanning.alpha) : f.traded ? '' : 'not traded',
    num(f.spanning?.se),
    num(f.spanning?.t),
    num(f.spanning?.p),
    num(f.thinBeta?.stat),
    num(f.thinBeta?.df),
    num(f.thinBeta?.p),
    f.thinBeta ? (f.thinBeta.flag ? 'yes' : 'no') : '',
    f.verdict,
  ];
}

export function runCsv(run: Run): string {
  const r = run.result;
  if (!r) throw new Error('runCsv needs a finished run');
  const s = run.spec;
  const header: string[][] = [
    ['keelson_factor_ledger', `run ${run.id}`],
    ['keelson_version', run.keelsonVersion],
    ['library', run.libraryName],
    ['library_id', String(run.libraryId)],
    ['edition', String(run.editionNumber)],
    ['edition_id', String(run.editionId)],
    ['spec_name', run.specName ?? ''],
    ['spec', JSON.stringify(s)],
    ['author', run.authorName],
    ['finished_at', run.finishedAt ?? ''],
    ['T', String(r.T)],
    ['N', String(r.N)],
    ['K', String(r.K)],
    ['lags', String(r.lags)],
    ['stage', r.stage],
    ['J_stat', num(r.J.stat)],
    ['J_df', num(r.J.df)],
    ['J_p', num(r.J.p)],
    ['hj_distance', num(r.hj)],
    ['grs_stat', num(r.grs?.stat)],
    ['grs_p', num(r.grs?.p)],
    ['caution', RUN_CAUTION],
  ];
  const rows: string[][] = [...header, [], [...CSV_FACTOR_COLUMNS], ...r.factors.map(factorRow)];
  if (r.jointDrop) {
    rows.push([], ['joint_drop_set', r.jointDrop.factors.join(' ')]);
    rows.push(['joint_wald_stat', num(r.jointDrop.wald?.stat), 'df', num(r.jointDrop.wald?.df), 'p', num(r.jointDrop.wald?.p)]);
    rows.push(['joint_drop_chi2', num(r.jointDrop.chi2Drop?.stat), 'df', num(r.jointDrop.chi2Drop?.df), 'p', num(r.jointDrop.chi2Drop?.p)]);
  }
  return Papa.unparse(rows, { newline: '\r\n' }) + '\r\n';
}

/** Escapes text for LaTeX. */
export function texEscape(s: string): string {
  return s.replace(/[\\{}$&#^_%~]/g, (c) =>
    c === '\\' ? '\\textbackslash{}' : c === '^' ? '\\textasciicircum{}' : c === '~' ? '\\textasciitilde{}' : `\\${c}`,
  );
}

const fx = (x: number | null | undefined, d: number) => (x === null || x === undefined ? '--' : x.toFixed(d));

/** A booktabs-free LaTeX table (plain \hline) of the factor ledger, with J below. */
export function runTex(run: Run): string {
  const r = run.result;
  if (!r) throw new Error('runTex needs a finished run');
  const lines: string[] = [];
  lines.push(`% Keelson ${texEscape(run.keelsonVersion)}: factor ledger of run ${run.id}`);
  lines.push(`% ${texEscape(run.libraryName)}, edition ${run.editionNumber}; T = ${r.T}, N = ${r.N}, K = ${r.K}, ${r.stage} stage, HAC lag ${r.lags}`);
  lines.push('% Statistical evidence about a model on past data, not investment advice.');
  lines.push('\\begin{tabular}{lrrrrrrrl}');
  lines.push('\\hline');
  lines.push('Factor & $b$ & $t(b)$ & $\\lambda$ & $t(\\lambda)$ & $\\chi^2_{\\mathrm{drop}}$ & $p_{\\mathrm{drop}}$ & $t(\\alpha_{\\mathrm{span}})$ & Verdict \\\\');
  lines.push('\\hline');
  for (const f of r.factors) {
    lines.push(
      [
        texEscape(f.name) + (f.thinBeta?.flag ? '$^{\\dagger}$' : ''),
        fx(f.b, 3),
        fx(f.tB, 2),
        fx(f.lambda, 4),
        fx(f.tLambda, 2),
        fx(f.chi2Drop?.stat, 2),
        fx(f.chi2Drop?.p, 3),
        f.spanning ? fx(f.spanning.t, 2) : f.traded ? '--' : 'n.t.',
        texEscape(f.verdict),
      ].join(' & ') + ' \\\\',
    );
  }
  lines.push('\\hline');
  lines.push(`\\multicolumn{9}{l}{$J = ${fx(r.J.stat, 2)}$, df $= ${r.J.df}$, $p = ${fx(r.J.p, 3)}$${r.hj !== null ? `; HJ distance $= ${fx(r.hj, 4)}$` : ''}${r.grs ? `; GRS $= ${fx(r.grs.stat, 2)}$, $p = ${fx(r.grs.p, 3)}$` : ''}} \\\\`);
  if (r.factors.some((f) => f.thinBeta?.flag)) lines.push('\\multicolumn{9}{l}{$^{\\dagger}$ thin-beta flag: $b$ and $\\lambda$ inference unreliable.} \\\\');
  lines.push('\\multicolumn{9}{l}{n.t.: not traded, no spanning check.} \\\\');
  lines.push('\\hline');
  lines.push('\\end{tabular}');
  return lines.join('\n') + '\n';
}
