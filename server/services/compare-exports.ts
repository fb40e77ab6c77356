/**
 * Exports of the compare view: both runs' ledgers and the tests between them (the squared-Sharpe
 * z test or, for nested models, the joint spanning test; the nested drop test), as CSV and as a
 * LaTeX table.
 *
 * CSV follows the run export's rules (exports.ts): a keyed header block, a blank line, then one
 * row per factor of each model (a `model` column says A or B) with every ledger column at full
 * precision plus the adjusted p (Holm, Benjamini–Yekutieli); numbers stay numbers in the stored
 * units (decimals per period), every text cell passes the one CSV-safety rule (shared/csv.ts).
 * LaTeX: a `table` float with caption and label, `booktabs` rules, units in the column heads,
 * `$-$` minus signs, p as on screen (formatP: "< 0.001"), λ in percent per period as on screen.
 */
import type { CompareResponse, Run } from '../../shared/runs';
import { RUN_CAUTION } from '../../shared/runs';
import { toCsv, type CsvCell } from '../../shared/csv';
import { DECIMALS, P_FLOOR, formatFixed, formatP, formatPercent, type FormatStyle } from '../../shared/format';
import { CSV_FACTOR_COLUMNS, factorRow, texEscape, type ExportContext } from './exports';

const periodWord = (ctx: ExportContext) => (ctx.frequency === 'monthly' ? 'month' : ctx.frequency === 'daily' ? 'day' : 'period');

function runHeader(label: 'a' | 'b', r: Run): CsvCell[][] {
  const res = r.result;
  return [
    [`run_${label}_id`, r.id],
    [`run_${label}_library`, r.libraryName],
    [`run_${label}_edition`, r.editionNumber],
    [`run_${label}_edition_id`, r.editionId],
    [`run_${label}_spec_name`, r.specName ?? ''],
    [`run_${label}_factors`, ...r.spec.factors],
    [`run_${label}_assets`, ...r.spec.assets],
    [`run_${label}_window_start`, r.spec.window?.start ?? ''],
    [`run_${label}_window_end`, r.spec.window?.end ?? ''],
    [`run_${label}_stage`, r.spec.stage],
    [`run_${label}_status`, r.status],
    [`run_${label}_T`, res?.T],
    [`run_${label}_lags`, res?.lags],
    [`run_${label}_verdict_basis`, res?.verdictBasis ?? ''],
    [`run_${label}_level`, res?.options.level],
    [`run_${label}_J_stat`, res?.J.stat],
    [`run_${label}_J_df`, res?.J.df],
    [`run_${label}_J_p`, res?.J.p],
    [`run_${label}_hj_distance`, res?.hj],
  ];
}

/** The compare view as CSV. */
export function compareCsv(c: CompareResponse, ctx: ExportContext = {}): string {
  const rows: CsvCell[][] = [['keelson_export', 'model comparison'], ...runHeader('a', c.a), ...runHeader('b', c.b)];
  rows.push(['units_returns', `decimal return per ${periodWord(ctx)} (0.01 = 1%; the screen and the LaTeX table show percent) in columns lambda se_lambda ci_lambda_* spanning_alpha spanning_se and test_spanning_alpha`]);
  rows.push(['units_theta', 'squared Sharpe ratio per period (mean over standard deviation, squared; not annualised)']);
  if (c.sharpe) {
    const s = c.sharpe;
    rows.push(['test', 'squared Sharpe ratio difference (z test, Barillas, Kan, Robotti and Shanken 2020)']);
    rows.push(['test_theta_a', s.a.theta], ['test_theta_a_se', s.a.se], ['test_theta_b', s.b.theta], ['test_theta_b_se', s.b.se]);
    rows.push(['test_diff', s.diff], ['test_diff_se', s.se], ['test_z', s.z], ['test_p', s.p], ['test_T', s.T], ['test_lags', s.lags]);
    rows.push(['test_shared_factors', ...s.shared]);
  } else if (c.sharpeSpanning) {
    const s = c.sharpeSpanning;
    rows.push(['test', 'joint spanning test of the larger model\'s extra factors (nested models)']);
    rows.push(['test_reason', s.reason]);
    rows.push(['test_theta_a', s.a.theta], ['test_theta_a_se', s.a.se], ['test_theta_b', s.b.theta], ['test_theta_b_se', s.b.se]);
    rows.push(['test_larger_run', s.larger === 'a' ? c.a.id : c.b.id]);
    rows.push(['test_spanning_factors', ...s.factors], ['test_spanning_on', ...s.on], ['test_spanning_alpha', ...s.alpha]);
    rows.push(['test_chi2', s.stat], ['test_df', s.df], ['test_p', s.p], ['test_T', s.T], ['test_lags', s.lags]);
    rows.push(['test_shared_factors', ...s.shared]);
  } else {
    rows.push(['test', 'none'], ['test_reason', c.sharpeRefusal?.message ?? '']);
  }
  const n = c.nested;
  rows.push(['nested', n.nested ? 'yes' : 'no']);
  if (n.reason) rows.push(['nested_reason', n.reason]);
  if (n.nested) {
    rows.push(['nested_smaller_run', n.smallerRunId], ['nested_larger_run', n.largerRunId], ['nested_dropped', ...n.dropped]);
    rows.push(['nested_drop_chi2', n.test?.stat], ['nested_drop_df', n.test?.df], ['nested_drop_p', n.test?.p]);
  }
  if (c.basisNote) rows.push(['basis_note', c.basisNote]);
  rows.push(['advice', RUN_CAUTION]);
  rows.push([], ['model', 'run_id', ...CSV_FACTOR_COLUMNS, 'p_holm', 'p_by']);
  for (const [label, r] of [['A', c.a], ['B', c.b]] as const)
    for (const f of r.result?.factors ?? []) rows.push([label, r.id, ...factorRow(f), f.pHolm, f.pBY]);
  return toCsv(rows, '\r\n');
}

const TEX: FormatStyle = { minus: '$-$', missing: '--', less: '$<$' };
const MATH: FormatStyle = { minus: '-', missing: '\\mbox{--}', less: '< ' };
const tn = (x: number | null | undefined, d: number) => formatFixed(x, d, TEX);
const tp = (p: number | null | undefined) => formatP(p, TEX);
const mn = (x: number | null | undefined, d: number) => formatFixed(x, d, MATH);
const pIs = (p: number) => (p < P_FLOOR ? `p ${formatP(p, MATH)}` : `p = ${formatP(p, MATH)}`);

/** The compare view as a LaTeX `table` (needs `\usepackage{booktabs}`). */
export function compareTex(c: CompareResponse, ctx: ExportContext = {}): string {
  const per = periodWord(ctx);
  const heads = ['Model', 'Factor', '$b$', '$t(b)$', '$p(b)$', '$p_{\\mathrm{Holm}}(b)$', '$p_{\\mathrm{BY}}(b)$', `$\\lambda$ (\\% per ${per})`, '$t(\\lambda)$', '$p(\\lambda)$', 'Verdict'];
  const lines: string[] = [];
  lines.push(`% Keelson: runs ${c.a.id} and ${c.b.id} compared. Needs \\usepackage{booktabs} in the preamble.`);
  lines.push('% Statistical evidence about models on past data, not investment advice.');
  lines.push('\\begin{table}[htbp]', '\\centering', '\\small');
  const side = (label: string, r: Run) =>
    `model ${label} = run ${r.id} (${r.spec.factors.map(texEscape).join(', ')}; ${texEscape(r.libraryName)}, edition ${r.editionNumber}${r.result ? `, $T = ${r.result.T}$, ${r.result.stage} stage, verdicts at the ${String(Math.round(r.result.options.level * 1e6) / 1e4)}\\% level on the ${r.result.verdictBasis} basis` : ''})`;
  lines.push(`\\caption{Two models compared: ${side('A', c.a)}; ${side('B', c.b)}. $b$ per unit of factor value in decimals, $\\lambda$ in percent per ${per}; $t$ and $p$ of $b$ and $\\lambda$ as in each run's ledger (standard errors of its verdict basis), $p_{\\mathrm{Holm}}$ and $p_{\\mathrm{BY}}$ the Holm and Benjamini--Yekutieli adjusted $p$ of the $b$ tests across the model's factors.}`);
  lines.push(`\\label{tab:keelson-compare-${c.a.id}-${c.b.id}}`);
  lines.push(`\\begin{tabular}{ll${'r'.repeat(heads.length - 3)}l}`, '\\toprule', `${heads.join(' & ')} \\\\`, '\\midrule');
  ([['A', c.a], ['B', c.b]] as const).forEach(([label, r], i) => {
    if (i > 0) lines.push('\\midrule');
    for (const f of r.result?.factors ?? [])
      lines.push(
        `${[label, texEscape(f.name), tn(f.b, DECIMALS.b), tn(f.tB, DECIMALS.t), tp(f.pB), tp(f.pHolm), tp(f.pBY), formatPercent(f.lambda, DECIMALS.pct, TEX), tn(f.tLambda, DECIMALS.t), tp(f.pLambda), texEscape(f.verdict)].join(' & ')} \\\\`,
      );
  });
  lines.push('\\bottomrule', '\\end{tabular}');
  const notes: string[] = [];
  for (const [label, r] of [['A', c.a], ['B', c.b]] as const)
    if (r.result) notes.push(`model ${label}: $J = ${mn(r.result.J.stat, DECIMALS.chi2)}$ (${r.result.J.df} df), $${pIs(r.result.J.p)}$${r.result.hj !== null ? `, HJ distance $= ${mn(r.result.hj, DECIMALS.hj)}$` : ''}`);
  let text = `${notes.join('; ')}.`;
  if (c.sharpe) {
    const s = c.sharpe;
    text += ` Squared Sharpe ratios of the factors (per ${per}): $\\hat\\theta_A = ${mn(s.a.theta, 4)}$ (s.e. $${mn(s.a.se, 4)}$), $\\hat\\theta_B = ${mn(s.b.theta, 4)}$ (s.e. $${mn(s.b.se, 4)}$); $\\hat\\theta_A - \\hat\\theta_B = ${mn(s.diff, 4)}$, s.e. $${mn(s.se, 4)}$, $z = ${mn(s.z, DECIMALS.t)}$, $${pIs(s.p)}$ (two-sided normal, HAC lag ${s.lags}).`;
    if (s.shared.length) text += ` The models share ${s.shared.map(texEscape).join(', ')}; the test compares the whole factor sets.`;
  } else if (c.sharpeSpanning) {
    const s = c.sharpeSpanning;
    text += ` Nested models: joint spanning test of ${s.factors.map(texEscape).join(', ')} on ${s.on.map(texEscape).join(', ')}, $\\chi^2 = ${mn(s.stat, DECIMALS.chi2)}$ (${s.df} df), $${pIs(s.p)}$. ${texEscape(s.reason)}`;
  } else if (c.sharpeRefusal) text += ` No squared-Sharpe test: ${texEscape(c.sharpeRefusal.message)}`;
  if (c.nested.nested && c.nested.test)
    text += ` Drop test of ${c.nested.dropped.map(texEscape).join(', ')} from run ${c.nested.largerRunId}: $\\chi^2 = ${mn(c.nested.test.stat, DECIMALS.chi2)}$ (${c.nested.test.df} df), $${pIs(c.nested.test.p)}$.`;
  if (c.basisNote) text += ` ${texEscape(c.basisNote)}`;
  text += ' Statistical evidence about models on past data, not investment advice.';
  lines.push('\\par\\smallskip', `{\\footnotesize ${text}\\par}`, '\\end{table}');
  return lines.join('\n') + '\n';
}
