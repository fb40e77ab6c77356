/**
 * The text form of a factor ledger, shared by `keelson estimate` and `keelson show` / `run`.
 * Keelson's own layout: a header block (data, units, model, basis), the verdicts, then one section
 * per question ("Needed?" on b, "Priced?" on λ), other checks, fit, drop set, Fama–MacBeth,
 * pricing errors and cautions. Every number column has fixed decimals chosen for the column;
 * returns-like numbers (λ, α, spanning intercepts, mean returns) are shown in % per period and say so.
 */
import type { LedgerResult } from '../lib/gmm/ledger';
import { ledgerWarningText } from '../shared/gmm-messages';

/** What the header says about where the numbers came from. */
export interface LedgerTextMeta {
  /** e.g. "library.csv" or "Run 12 — CLI sample, edition 1". */
  readonly source: string;
  /** e.g. "1990-01 to 2004-12". */
  readonly period?: string;
  /** e.g. "percent in the file, divided by 100". */
  readonly unitsNote?: string;
}

const DASH = '–';

/** Fixed decimals for a whole column: enough for `sig` significant digits of its largest entry. */
export function fixedColumn(values: readonly (number | null | undefined)[], sig = 4, maxDecimals = 6): string[] {
  const finite = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v));
  const top = finite.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  const decimals = top > 0 ? Math.max(0, Math.min(maxDecimals, sig - 1 - Math.floor(Math.log10(top)))) : 2;
  return values.map((v) => (typeof v === 'number' && Number.isFinite(v) ? v.toFixed(decimals) : DASH));
}

/** p-values: three decimals, "<0.001" below, a ◆ marker when below the level. */
export function pCell(p: number | null | undefined, level: number): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return `${DASH} `;
  const s = p < 0.001 ? '<0.001' : p.toFixed(3);
  return `${s}${p <= level ? '◆' : ' '}`;
}

const SHAPE: Record<string, string> = {
  'needed and priced': '■',
  'needed, not priced alone': '■',
  'priced, not needed': '□',
  neither: '┄',
};

/** A table: first column left-aligned, the rest right-aligned, two spaces between columns. */
function grid(head: readonly string[], rows: readonly (readonly string[])[], indent = '  '): string {
  const w = head.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const line = (r: readonly string[]) => indent + r.map((c, j) => (j === 0 ? c.padEnd(w[j]) : c.padStart(w[j]))).join('  ').trimEnd();
  return [line(head), indent + w.map((n) => '─'.repeat(n)).join('  '), ...rows.map(line)].join('\n') + '\n';
}

const pct = (v: number | null | undefined) => (typeof v === 'number' ? v * 100 : null);

function stageText(r: LedgerResult): string {
  const w = { identity: 'the identity weighting', 'second-moment': 'the second-moment weighting (E[RR′])⁻¹', covariance: 'the covariance weighting Cov(R)⁻¹' }[r.options.weighting];
  if (r.stage === 'first') return `first-stage GMM with ${w}`;
  if (r.stage === 'second') return `second-stage GMM from ${w}`;
  return `iterated GMM from ${w} (${r.iterations} updates${r.converged ? '' : ', did not converge'})`;
}

function basisText(r: LedgerResult): string {
  const lvl = `${+(r.options.level * 100).toFixed(2)}%`;
  const b = r.verdictBasis;
  let s = `${b}: the verdicts use the ${b === 'standard' ? 'standard' : b === 'robust' ? 'misspecification-robust' : 'bootstrap'} p-values at the ${lvl} level`;
  if (r.basis !== r.verdictBasis) s += ` (${r.basis} asked for; its p-values are not in yet)`;
  return s;
}

/** Render a ledger as text. */
export function renderLedgerText(r: LedgerResult, meta: LedgerTextMeta): string {
  const level = r.options.level;
  const hasRobust = r.factors.some((f) => f.robust);
  const hasBoot = r.factors.some((f) => f.bootstrap);
  const out: string[] = [];
  out.push('Keelson factor ledger');
  out.push(`  data    ${meta.source}${meta.period ? `, ${meta.period}` : ''} (T = ${r.T}), ${r.N} test assets, ${r.K} factors`);
  out.push(`  units   ${meta.unitsNote ? `${meta.unitsNote}; ` : ''}λ, α and mean returns below are in % per period`);
  out.push(
    `  model   ${r.options.form === 'centred' ? "m = 1 − b′(f − μ) (centred form)" : "m = 1 − b′f (uncentred form)"}${r.options.factorMeansKnown ? ', factor means treated as known' : ''}, ${stageText(r)}, Bartlett HAC lag ${r.lags}`,
  );
  out.push(`  basis   ${basisText(r)}`);
  if (r.bootstrap) out.push(`          bootstrap: ${r.bootstrap.validDraws} of ${r.bootstrap.draws} ${r.bootstrap.scheme === 'block' ? `block (length ${r.bootstrap.blockLength})` : 'iid'} draws, seed ${r.bootstrap.seed}, Hall–Horowitz recentring`);
  else if (r.options.bootstrap) out.push('          bootstrap: asked for, not merged yet');
  out.push('');

  out.push('Verdicts');
  const nameW = Math.max(...r.factors.map((f) => f.name.length));
  const verdictW = Math.max(...r.factors.map((f) => f.verdict.length));
  for (const f of r.factors) {
    const other = (['standard', 'robust', 'bootstrap'] as const)
      .filter((b) => b !== r.verdictBasis && f.verdicts[b] && f.verdicts[b] !== f.verdict)
      .map((b) => `${b}: ${f.verdicts[b]}`);
    const tail = `${f.traded ? '' : '(not traded)  '}${other.length ? `[${other.join('; ')}]` : ''}`;
    out.push(`  ${SHAPE[f.verdict] ?? ' '} ${f.name.padEnd(nameW)}  ${tail ? f.verdict.padEnd(verdictW) + '  ' + tail : f.verdict}`.trimEnd());
  }
  out.push(`  ◆ marks p ≤ ${level}; ■ needed, □ priced only, ┄ neither`);
  out.push('');

  // Needed? b
  const headB = ['factor', 'b', 'se', 't', 'p'];
  if (hasRobust) headB.push('p robust');
  if (hasBoot) headB.push('p boot');
  headB.push('drop χ²', 'p drop');
  if (hasBoot) headB.push('p drop boot');
  const bCol = fixedColumn(r.factors.flatMap((f) => [f.b, f.seB]));
  const dropCol = fixedColumn(r.factors.map((f) => f.chi2Drop?.stat ?? null), 3, 2);
  const rowsB = r.factors.map((f, k) => {
    const row = [f.name, bCol[2 * k], bCol[2 * k + 1], f.tB.toFixed(2), pCell(f.pB, level)];
    if (hasRobust) row.push(pCell(f.robust?.pB, level));
    if (hasBoot) row.push(pCell(f.bootstrap?.pB, level));
    row.push(dropCol[k], pCell(f.chi2Drop?.p, level));
    if (hasBoot) row.push(pCell(f.bootstrap?.pDrop, level));
    return row;
  });
  out.push('Needed? SDF loading b (Wald test; drop test with one common weighting)');
  out.push(grid(headB, rowsB));

  // Priced? λ
  const headL = ['factor', 'λ %', 'se', 't', 'p'];
  if (hasRobust) headL.push('p robust');
  if (hasBoot) headL.push('p boot');
  const lCol = fixedColumn(r.factors.flatMap((f) => [pct(f.lambda), pct(f.seLambda)]));
  const rowsL = r.factors.map((f, k) => {
    const row = [f.name, lCol[2 * k], lCol[2 * k + 1], f.tLambda.toFixed(2), pCell(f.pLambda, level)];
    if (hasRobust) row.push(pCell(f.robust?.pLambda, level));
    if (hasBoot) row.push(pCell(f.bootstrap?.pLambda, level));
    return row;
  });
  out.push('Priced? risk premium λ (% per period)');
  out.push(grid(headL, rowsL));

  const spanCol = fixedColumn(r.factors.map((f) => pct(f.spanning?.alpha ?? null)));
  out.push('Other checks (spanning intercept in % per period; thin beta: no reliable covariance with the assets)');
  out.push(
    grid(
      ['factor', 'spanning α %', 'p', 'thin beta'],
      r.factors.map((f, k) => [f.name, f.spanning ? spanCol[k] : DASH, pCell(f.spanning?.p, level), f.thinBeta ? (f.thinBeta.flag ? `flagged (p ${f.thinBeta.p.toFixed(3)})` : 'no') : DASH]),
    ),
  );

  out.push('Fit');
  const bootJ = r.bootstrap ? `, bootstrap p ${pCell(r.bootstrap.pJ, level).trim()}` : '';
  out.push(`  J test        ${r.J.stat.toFixed(2)} with ${r.J.df} degrees of freedom, p ${pCell(r.J.p, level).trim()}${bootJ}`);
  out.push(`  HJ distance   ${r.hj === null ? DASH : r.hj.toFixed(4)}`);
  out.push(`  GRS           ${r.grs ? `${r.grs.stat.toFixed(2)} against F(${r.grs.df1}, ${r.grs.df2}), p ${pCell(r.grs.p, level).trim()}` : 'not reported (needs every factor traded)'}`);
  out.push('');

  if (r.jointDrop) {
    const j = r.jointDrop;
    out.push(`Drop set {${j.factors.join(', ')}}`);
    out.push(`  Wald on b     ${j.wald ? `${j.wald.stat.toFixed(2)} with ${j.wald.df} df, p ${pCell(j.wald.p, level).trim()}` : DASH}${r.bootstrap?.pJointWald != null ? `, bootstrap p ${pCell(r.bootstrap.pJointWald, level).trim()}` : ''}`);
    out.push(`  drop test     ${j.chi2Drop ? `${j.chi2Drop.stat.toFixed(2)} with ${j.chi2Drop.df} df, p ${pCell(j.chi2Drop.p, level).trim()}` : DASH}${r.bootstrap?.pJointDrop != null ? `, bootstrap p ${pCell(r.bootstrap.pJointDrop, level).trim()}` : ''}`);
    if (r.jointSpanning) out.push(`  spanning      ${r.jointSpanning.stat.toFixed(2)} with ${r.jointSpanning.df} df, p ${pCell(r.jointSpanning.p, level).trim()}`);
    out.push('');
  }

  if (r.famaMacBeth) {
    const fm = r.famaMacBeth;
    const rows = [...(fm.zeroBeta ? [fm.zeroBeta] : []), ...fm.factors];
    const c = fixedColumn(rows.flatMap((x) => [pct(x.lambda), pct(x.se), pct(x.seShanken)]));
    out.push(`Fama–MacBeth premia (% per period${fm.intercept ? ', with intercept' : ''}; Shanken-corrected se beside)`);
    out.push(grid(['', 'λ %', 'se', 'p', 'se Shanken', 'p Shanken'], rows.map((x, i) => [x.name, c[3 * i], c[3 * i + 1], pCell(x.p, level), c[3 * i + 2], pCell(x.pShanken, level)])));
  }

  const pe = r.pricingErrors;
  const pc = fixedColumn(pe.flatMap((p) => [pct(p.meanReturn), pct(p.predicted), pct(p.alpha), pct(p.se)]));
  out.push('Pricing errors (% per period)');
  out.push(grid(['asset', 'mean', 'predicted', 'α', 'se', 't'], pe.map((p, i) => [p.asset, pc[4 * i], pc[4 * i + 1], pc[4 * i + 2], pc[4 * i + 3], p.t.toFixed(2)])));

  const cautions = [r.caution, r.lagWarning, ...r.warnings.map(ledgerWarningText)].filter((w): w is string => Boolean(w));
  if (r.robustNote && r.stage !== 'first') cautions.push(r.robustNote);
  if (cautions.length) {
    out.push('Cautions');
    for (const c of cautions) out.push(`  - ${c}`);
    out.push('');
  }
  out.push('Statistical evidence, not investment advice.');
  return out.join('\n') + '\n';
}
