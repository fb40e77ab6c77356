/**
 * Run and library exports: the CSV parsed back with papaparse (one value per cell, numeric columns
 * numeric, formula-start names neutralised while negative numbers stay numbers), the LaTeX table's
 * structure (balanced environments, booktabs rules, cells per row = the tabular spec), the basis
 * and level in both, λ in percent as on screen, and robust / bootstrap columns.
 *
 * Outside sources: the formula-start characters = + - @ TAB CR are those of OWASP's "CSV
 * Injection" page (from memory); booktabs' rule commands \toprule \midrule \bottomrule are from the
 * booktabs package documentation (from memory). No TeX is installed here (Debian's texlive is not
 * on this machine), so the LaTeX is checked structurally, not compiled.
 * Data: the invented, seeded economy of runs-fixture.ts with renamed series.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import { agentAs, makeTestApp, type Agent, type TestApp } from './helpers';
import { okOf } from '../gmm/helpers';
import { FIX_ASSETS, makeFixture, spec, type Fixture } from './runs-fixture';
import { uploadCsv, confirm } from './libraries-helpers';
import { mailSettled } from '../../server/services/runs';
import { runResponseSchema, type Run } from '../../shared/runs';
import { ledgerResultSchema } from '../../shared/ledger';
import { CSV_FACTOR_COLUMNS, CSV_NUMERIC_COLUMNS, exportContextFor, runCsv, runTex, texEscape } from '../../server/services/exports';
import { CSV_FORMULA_START, csvLine, toCsv } from '../../shared/csv';
import { formatFixed, formatP, formatPercent } from '../../shared/format';
import { bootstrapSdfTests } from '../../lib/gmm/bootstrap';
import { withBootstrap } from '../../lib/gmm/ledger-bootstrap';
import { normalQuantile, normalTwoSidedP } from '../../lib/gmm/distributions';
import { factorVerdict } from '../../lib/gmm/verdict';

/** Series renamed so that their names start with spreadsheet formula characters. */
const RENAME: Record<string, string> = { A01: '=cmd|x', A02: '+x', A03: '-x', A04: '@x', MKT: '=MKT()', ECHO: '-ECHO', CLIMA: '@CLIMA' };
const LIB_NAME = '=HYPERLINK("http://example.invalid","open")';
const ASSETS = FIX_ASSETS.map((a) => RENAME[a] ?? a);
const FACTORS = ['=MKT()', '-ECHO', '@CLIMA'];

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let desk: Agent;
let lib: { libraryId: number; editionId: number };
let run: Run;

function renamedCsv(f: Fixture): string {
  const names = ['A01', 'A02', 'A03', 'A04', 'A05', 'A06', 'A07', 'A08', 'A09', 'A10', 'MKT', 'ECHO', 'CLIMA', 'RF'];
  // raw names (no CSV escaping): this file is what a user uploads
  const lines = [['date', ...names.map((n) => RENAME[n] ?? n)].join(',')];
  f.dates.forEach((d, i) => lines.push([d, ...names.map((n) => String(f.cols[n][i]))].join(',')));
  return `${lines.join('\n')}\n`;
}

beforeAll(async () => {
  t = await makeTestApp();
  fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  desk = await agentAs(t.app, 'desk');
  const up = await uploadCsv(admin, renamedCsv(fx), 'formula-names.csv');
  if (up.status !== 201) throw new Error(`upload ${up.status} ${JSON.stringify(up.body)}`);
  const kinds: Record<string, { kind: string; traded: boolean }> = {
    '=MKT()': { kind: 'factor', traded: true },
    '-ECHO': { kind: 'factor', traded: true },
    '@CLIMA': { kind: 'factor', traded: false },
    RF: { kind: 'rf', traded: false },
  };
  const series = (up.body.upload.columns as string[]).map((name) => ({ name, kind: kinds[name]?.kind ?? 'asset', traded: kinds[name]?.traded ?? false }));
  const c = await confirm(admin, up.body.upload.id, { name: LIB_NAME, visibility: 'shared', units: 'decimal', series });
  if (c.status !== 201) throw new Error(`confirm ${c.status} ${JSON.stringify(c.body)}`);
  lib = { libraryId: c.body.library.id, editionId: c.body.edition.id };
  const r = await admin
    .post('/api/v1/runs')
    .set('x-csrf-token', admin.csrf)
    .send({ editionId: lib.editionId, spec: spec({ assets: ASSETS, factors: FACTORS, nonTraded: ['@CLIMA'], rf: 'RF', dropSet: ['-ECHO', '@CLIMA'] }) });
  if (r.status !== 201) throw new Error(`run ${r.status} ${JSON.stringify(r.body)}`);
  run = runResponseSchema.parse(r.body).run;
  if (run.status !== 'finished') throw new Error(`run ${run.status}: ${run.error}`);
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

const parse = (text: string) => Papa.parse<string[]>(text, { skipEmptyLines: false }).data;

/** A cell a spreadsheet would run: starts with a formula character and is not a plain number. */
function isLiveFormula(cell: string): boolean {
  if (!CSV_FORMULA_START.test(cell)) return false;
  return !/^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(cell);
}

/** Splits the run CSV into its keyed header block and its factor table. */
function splitRunCsv(text: string) {
  const rows = parse(text.replace(/\r\n$/, ''));
  const h = rows.findIndex((x) => x[0] === 'factor');
  const head = rows.slice(0, h - 1);
  const blank = rows[h - 1];
  const table = rows.slice(h + 1);
  const key = new Map(head.map((x) => [x[0], x.slice(1)]));
  return { rows, head, blank, header: rows[h], table, key };
}

describe('shared CSV rule (shared/csv.ts)', () => {
  it('neutralises = + - @ TAB CR text cells and keeps numbers, negative ones too, unquoted', () => {
    const names = ['=cmd', '+x', '-x', '@x', '\tx', '\rx'];
    const text = toCsv([[...names, -0.0123, 0.5, -1e-12, 'plain', 'a,b']], '\n');
    const cells = parse(text.trimEnd())[0];
    expect(cells.slice(0, 6)).toEqual(names.map((n) => `'${n}`));
    for (const c of cells) expect(isLiveFormula(c), JSON.stringify(c)).toBe(false);
    expect(cells[6]).toBe('-0.0123');
    expect(Number(cells[6])).toBe(-0.0123);
    expect(Number(cells[8])).toBe(-1e-12);
    expect(cells[10]).toBe('a,b');
    expect(text).toContain(',-0.0123,0.5,'); // no quote around a negative number
    expect(csvLine([NaN, Infinity, null, undefined, 1])).toBe(',,,,1');
  });
});

describe('run CSV', () => {
  let text: string;
  beforeAll(async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/export.csv`).expect(200);
    expect(r.headers['content-type']).toMatch(/text\/csv/);
    text = r.text;
  });

  it('is a keyed header block, one blank line, then one value per cell in the factor table', () => {
    const { head, blank, header, table, key } = splitRunCsv(text);
    expect(blank).toEqual(['']);
    for (const row of head) expect(row[0], JSON.stringify(row)).toMatch(/^[A-Za-z][A-Za-z0-9_]*$/);
    const keys = head.map((x) => x[0]).filter((k) => k !== 'warning');
    expect(new Set(keys).size).toBe(keys.length);
    expect(header).toEqual([...CSV_FACTOR_COLUMNS]);
    expect(table.length).toBe(run.result!.K);
    for (const row of table) expect(row.length).toBe(CSV_FACTOR_COLUMNS.length);
    expect(key.get('run_id')).toEqual([String(run.id)]);
    expect(JSON.parse(key.get('spec')![0])).toEqual(run.spec);
  });

  it('keeps numeric columns numeric (exact doubles, empty where undefined) and states status in words', () => {
    const { table } = splitRunCsv(text);
    const col = (name: string) => CSV_FACTOR_COLUMNS.indexOf(name as (typeof CSV_FACTOR_COLUMNS)[number]);
    let negatives = 0;
    for (const row of table) {
      for (const c of CSV_NUMERIC_COLUMNS) {
        const cell = row[col(c)];
        if (cell === '') continue;
        expect(Number.isFinite(Number(cell)), `${c} = ${cell}`).toBe(true);
        expect(cell).not.toMatch(/^'/);
        if (cell.startsWith('-')) negatives += 1;
      }
    }
    expect(negatives).toBeGreaterThan(0); // the check above did see negative numbers
    run.result!.factors.forEach((f, k) => {
      const row = table[k];
      expect(Number(row[col('b')])).toBe(f.b);
      expect(Number(row[col('ci_b_low')])).toBe(f.ciB[0]);
      expect(Number(row[col('lambda')])).toBe(f.lambda);
      expect(Number(row[col('p_lambda')])).toBe(f.pLambda);
      expect(row[col('verdict_standard')]).toBe(f.verdicts.standard);
      expect(row[col('verdict')]).toBe(f.verdict);
      // main has no robust SEs for a second-stage run and no bootstrap: empty cells, not words
      expect(row[col('robust_se_b')]).toBe('');
      expect(row[col('bootstrap_p_b')]).toBe('');
    });
    const clima = table[FACTORS.indexOf('@CLIMA')];
    expect(clima[col('spanning_status')]).toBe('not traded');
    expect(clima[col('spanning_alpha')]).toBe('');
    const mkt = table[FACTORS.indexOf('=MKT()')];
    expect(mkt[col('spanning_status')]).toBe('computed');
    expect(Number(mkt[col('spanning_alpha')])).toBe(run.result!.factors[0].spanning!.alpha);
  });

  it('neutralises formula-start names (assets, factors, library) and no cell is a live formula', () => {
    const { rows, table, key } = splitRunCsv(text);
    for (const row of rows) for (const c of row) expect(isLiveFormula(c), JSON.stringify(c)).toBe(false);
    expect(table.map((r) => r[0])).toEqual(FACTORS.map((f) => `'${f}`));
    expect(key.get('library')).toEqual([`'${LIB_NAME}`]);
    expect(key.get('spec_assets')).toEqual(ASSETS.map((a) => (CSV_FORMULA_START.test(a) ? `'${a}` : a)));
    expect(key.get('spec_non_traded')).toEqual(["'@CLIMA"]);
    expect(key.get('joint_drop_set')).toEqual(["'-ECHO", "'@CLIMA"]);
  });

  it('states basis, verdict basis, level, units and the spec in the header block', () => {
    const { key } = splitRunCsv(text);
    expect(key.get('basis')).toEqual([run.result!.basis]);
    expect(key.get('verdict_basis')).toEqual([run.result!.verdictBasis]);
    expect(key.get('level')).toEqual(['0.05']);
    expect(key.get('units_returns')![0]).toMatch(/decimal return per period \(0\.01 = 1%/);
    expect(key.get('units_returns')![0]).toContain('lambda');
    expect(key.get('units_b')![0]).toMatch(/decimals/);
    expect(key.get('stage')).toEqual(['second']);
    expect(key.get('spec_factors')!.length).toBe(3);
    expect(key.get('spec_rf')).toEqual(['RF']);
    expect(Number(key.get('J_stat')![0])).toBe(run.result!.J.stat);
    expect(Number(key.get('joint_drop_chi2')![0])).toBe(run.result!.jointDrop!.chi2Drop!.stat);
    expect(key.get('bootstrap_status')).toEqual(['not asked']);
    expect(key.get('advice')![0]).toContain('not investment advice');
  });

  it('names the period when the route passes the edition frequency (monthly library: per month)', () => {
    const ctx = exportContextFor(t.db, run.editionId);
    expect(ctx).toEqual({ frequency: 'monthly' });
    expect(splitRunCsv(runCsv(run, ctx)).key.get('units_returns')![0]).toMatch(/^decimal return per month/);
    expect(runTex(run, ctx)).toContain('$\\lambda$ (\\% per month)');
  });

  it('carries robust and bootstrap p columns and verdicts per basis when the ledger has them', () => {
    const r = withRobustAndBootstrap(run, 'robust');
    const { table, key } = splitRunCsv(runCsv(r));
    const col = (name: string) => CSV_FACTOR_COLUMNS.indexOf(name as (typeof CSV_FACTOR_COLUMNS)[number]);
    expect(key.get('basis')).toEqual(['robust']);
    expect(key.get('verdict_basis')).toEqual(['robust']);
    expect(key.get('bootstrap_status')).toEqual(['finished']);
    expect(Number(key.get('bootstrap_p_J')![0])).toBe(r.result!.bootstrap!.pJ);
    r.result!.factors.forEach((f, k) => {
      const row = table[k];
      expect(Number(row[col('robust_se_b')])).toBe(f.robust!.seB);
      expect(Number(row[col('robust_p_lambda')])).toBe(f.robust!.pLambda);
      expect(Number(row[col('robust_ci_lambda_low')])).toBe(f.robust!.ciLambda[0]);
      expect(Number(row[col('bootstrap_p_b')])).toBe(f.bootstrap!.pB);
      expect(row[col('verdict_robust')]).toBe(f.verdicts.robust);
      expect(row[col('verdict_bootstrap')]).toBe(f.verdicts.bootstrap);
      expect(row[col('verdict')]).toBe(f.verdicts.robust);
      if (f.bootstrap!.pLambda === null) expect(row[col('bootstrap_p_lambda')]).toBe('');
    });
  });
});

/**
 * A copy of the run as a first-stage, robust-basis ledger would look once robust SEs are filled
 * in (synthetic robust SEs: the standard ones × 1.5, with t, p and intervals consistent with
 * them), merged with a real bootstrap of the same model (lib/gmm bootstrapSdfTests, 99 draws).
 * It tests the formatting contract only: which numbers go to which column.
 */
function withRobustAndBootstrap(base: Run, basis: 'robust' | 'bootstrap'): Run {
  const res = base.result!;
  const p2 = normalTwoSidedP;
  const z = normalQuantile(1 - res.options.level / 2);
  const factors = res.factors.map((f) => {
    const seB = f.seB * 1.5;
    const seL = f.seLambda * 1.5;
    const robust = {
      seB,
      tB: f.b / seB,
      pB: p2(f.b / seB),
      ciB: [f.b - z * seB, f.b + z * seB] as [number, number],
      seLambda: seL,
      tLambda: f.lambda / seL,
      pLambda: p2(f.lambda / seL),
      ciLambda: [f.lambda - z * seL, f.lambda + z * seL] as [number, number],
    };
    const rv = factorVerdict(robust.pB, robust.pLambda, res.options.level);
    return { ...f, robust, verdicts: { ...f.verdicts, robust: rv }, verdict: basis === 'robust' ? rv : f.verdict };
  });
  const ledger = { ...res, factors, basis, verdictBasis: basis === 'robust' ? ('robust' as const) : ('standard' as const), robustNote: null, options: { ...res.options, basis, bootstrap: { draws: 99, scheme: 'iid' as const, seed: 7 } } };
  const excess = (name: string) => fx.cols[Object.keys(RENAME).find((k) => RENAME[k] === name) ?? name].map((v, i) => v - fx.cols.RF[i]);
  const returns = fx.dates.map((_, i) => ASSETS.map((a) => excess(a)[i]));
  const factorsM = fx.dates.map((_, i) => ['MKT', 'ECHO', 'CLIMA'].map((n) => fx.cols[n][i]));
  const boot = okOf(bootstrapSdfTests({
    returns,
    factors: factorsM,
    factorNames: FACTORS,
    options: { stage: res.stage, weighting: res.options.weighting, lags: res.lags, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 7 },
  })).bootstrap;
  const merged = withBootstrap(ledger as unknown as Parameters<typeof withBootstrap>[0], boot);
  return { ...base, result: ledgerResultSchema.parse(merged) };
}

describe('library CSV', () => {
  it('neutralises formula-start series names and keeps the values numbers, negative ones too', async () => {
    const r = await desk.get(`/api/v1/libraries/${lib.libraryId}/editions/1/export.csv`).expect(200);
    const rows = parse(r.text.trimEnd());
    for (const row of rows) for (const c of row) expect(isLiveFormula(c), JSON.stringify(c)).toBe(false);
    const header = rows[0];
    expect(header).toContain("'=cmd|x");
    expect(header).toContain("'-x");
    expect(header).toContain("'+x");
    expect(header).toContain("'@x");
    expect(header).toContain("'=MKT()");
    const j = header.indexOf("'-ECHO");
    let negatives = 0;
    rows.slice(1).forEach((row, i) => {
      expect(row[0]).toBe(fx.dates[i]);
      expect(Number(row[j])).toBe(fx.cols.ECHO[i]); // exact double
      if (row[j].startsWith('-')) negatives += 1;
    });
    expect(negatives).toBeGreaterThan(10);
  });
});

/** LaTeX structure: environments nest, braces balance, $ pairs, rows have as many cells as columns. */
function checkTex(tex: string) {
  const body = tex.split('\n').filter((l) => !l.startsWith('%'));
  const all = body.join('\n');
  const stack: string[] = [];
  for (const m of all.matchAll(/\\(begin|end)\{([a-z*]+)\}/g)) {
    if (m[1] === 'begin') stack.push(m[2]);
    else expect(stack.pop(), `\\end{${m[2]}}`).toBe(m[2]);
  }
  expect(stack).toEqual([]);
  expect((all.match(/(?<!\\)\{/g) ?? []).length).toBe((all.match(/(?<!\\)\}/g) ?? []).length);
  expect((all.match(/(?<!\\)\$/g) ?? []).length % 2).toBe(0);
  for (const env of ['table', 'tabular']) expect((all.match(new RegExp(`\\\\begin\\{${env}\\}`, 'g')) ?? []).length).toBe(1);
  for (const rule of ['toprule', 'midrule', 'bottomrule']) expect((all.match(new RegExp(`\\\\${rule}\\b`, 'g')) ?? []).length).toBe(1);
  expect(all).not.toContain('\\hline');
  expect((all.match(/\\caption\{/g) ?? []).length).toBe(1);
  expect(all).toMatch(/\\label\{tab:keelson-run-\d+\}/);
  const colSpec = /\\begin\{tabular\}\{([lrc]+)\}/.exec(all)![1];
  const inside = all.slice(all.indexOf('\\toprule'), all.indexOf('\\bottomrule'));
  const rows = inside.split('\n').filter((l) => l.endsWith('\\\\'));
  for (const l of rows) expect(l.split(/(?<!\\)&/).length, l).toBe(colSpec.length);
  // a minus sign is typeset as $-$, never a bare hyphen before a digit
  for (const l of rows) expect(l, l).not.toMatch(/(^|[\s&])-\d/);
  return { rows, colSpec, all };
}

describe('run LaTeX', () => {
  it('is a table float with caption, label, booktabs rules and one cell per column', async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/export.tex`).expect(200);
    const { rows, colSpec, all } = checkTex(r.text);
    expect(rows.length).toBe(1 + run.result!.K);
    expect(colSpec).toBe('lrrrrrrrrrrl');
    // caption: basis and level
    const caption = /\\caption\{([\s\S]*?)\}\n\\label/.exec(all)![1];
    expect(caption).toContain('5\\% level on the standard basis');
    expect(caption).toContain('percent per period');
    // units in the column heads
    expect(rows[0]).toContain('$\\lambda$ (\\% per period)');
    expect(rows[0]).toContain('$\\alpha_{\\mathrm{span}}$ (\\% per period)');
  });

  it('prints λ and α in percent as on screen, $-$ minus signs and p as on screen', async () => {
    const tex = (await desk.get(`/api/v1/runs/${run.id}/export.tex`).expect(200)).text;
    const { rows } = checkTex(tex);
    const texStyle = (s: string) => s.replace('\u2212', '$-$').replace('< ', '$<$');
    run.result!.factors.forEach((f, k) => {
      const cells = rows[k + 1].replace(/ \\\\$/, '').split(' & ');
      expect(cells[0]).toBe(texEscape(f.name) + (f.thinBeta?.flag ? '$^{\\dagger}$' : ''));
      // the screen shows λ × 100 with 3 decimals (components/ledger-table.tsx)
      expect(cells[4]).toBe(texStyle(formatPercent(f.lambda)));
      expect(cells[4]).toBe(texStyle(formatFixed(f.lambda * 100, 3)));
      expect(cells[1]).toBe(texStyle(formatFixed(f.b, 3)));
      expect(cells[3]).toBe(texStyle(formatP(f.pB)));
      expect(cells[11]).toBe(f.verdict);
      if (!f.traded) expect(cells[9]).toBe('n.t.');
      else expect(cells[9]).toBe(texStyle(formatPercent(f.spanning!.alpha)));
    });
    // the invented economy prices MKT strongly: its p for λ is printed with the < 0.001 rule
    expect(run.result!.factors[0].pLambda).toBeLessThan(0.001);
    expect(rows[1].split(' & ')[6]).toBe('$<$0.001');
    expect(tex).toContain('not investment advice');
  });

  it('escapes names and uses the robust basis t and p when the verdict rests on it', () => {
    const r = withRobustAndBootstrap(run, 'robust');
    const { rows, all } = checkTex(runTex(r, { frequency: 'monthly' }));
    expect(all).toContain('5\\% level on the robust basis');
    expect(all).toContain('percent per month');
    expect(texEscape('a_b&c%d#e$f{g}h~i^j\\k<l')).toBe('a\\_b\\&c\\%d\\#e\\$f\\{g\\}h\\textasciitilde{}i\\textasciicircum{}j\\textbackslash{}k\\textless{}l');
    r.result!.factors.forEach((f, k) => {
      const cells = rows[k + 1].replace(/ \\\\$/, '').split(' & ');
      expect(cells[2]).toBe(formatFixed(f.robust!.tB, 2, { minus: '$-$' }));
      expect(cells[6]).toBe(formatP(f.robust!.pLambda, { minus: '$-$', less: '$<$' }));
      expect(cells[11]).toBe(f.verdicts.robust);
    });
    expect(all).toMatch(/bootstrap \$p < 0\.001\$|bootstrap \$p = \d\.\d{3}\$/);
  });

  it('uses the bootstrap p and names the draws when the basis is bootstrap', () => {
    const r = withRobustAndBootstrap(run, 'bootstrap');
    expect(r.result!.verdictBasis).toBe('bootstrap');
    const { rows, all } = checkTex(runTex(r));
    expect(all).toMatch(/5\\% level on the bootstrap basis: \$p\$ from \d+ recentred bootstrap draws \(iid resampling, seed 7\)/);
    r.result!.factors.forEach((f, k) => {
      const cells = rows[k + 1].replace(/ \\\\$/, '').split(' & ');
      expect(cells[3]).toBe(formatP(f.bootstrap!.pB, { minus: '$-$', less: '$<$' }));
      expect(cells[11]).toBe(f.verdicts.bootstrap);
    });
    const csv = splitRunCsv(runCsv(r));
    expect(csv.key.get('verdict_basis')).toEqual(['bootstrap']);
  });
});

describe('a first-stage run on the robust basis (robust SEs from lib/gmm)', () => {
  it('exports the robust SEs, the robust verdicts and names the robust basis in CSV and LaTeX', async () => {
    const r = await admin
      .post('/api/v1/runs')
      .set('x-csrf-token', admin.csrf)
      .send({ editionId: lib.editionId, spec: spec({ assets: ASSETS, factors: FACTORS, nonTraded: ['@CLIMA'], rf: 'RF', stage: 'first', weighting: 'covariance' }) });
    expect(r.status).toBe(201);
    const first = runResponseSchema.parse(r.body).run;
    const res = first.result!;
    expect(res.verdictBasis).toBe('robust');
    expect(res.factors.every((f) => f.robust !== null)).toBe(true);
    const csv = splitRunCsv((await desk.get(`/api/v1/runs/${first.id}/export.csv`).expect(200)).text);
    const col = (name: string) => CSV_FACTOR_COLUMNS.indexOf(name as (typeof CSV_FACTOR_COLUMNS)[number]);
    expect(csv.key.get('verdict_basis')).toEqual(['robust']);
    expect(csv.key.get('weighting')).toEqual(['covariance']);
    res.factors.forEach((f, k) => {
      const row = csv.table[k];
      expect(Number(row[col('robust_se_b')])).toBe(f.robust!.seB);
      expect(Number(row[col('robust_t_lambda')])).toBe(f.robust!.tLambda);
      expect(Number(row[col('robust_ci_b_low')])).toBe(f.robust!.ciB[0]);
      expect(row[col('verdict_robust')]).toBe(f.verdicts.robust);
      expect(row[col('verdict')]).toBe(f.verdicts.robust);
    });
    const { rows, all } = checkTex((await desk.get(`/api/v1/runs/${first.id}/export.tex`).expect(200)).text);
    expect(all).toContain('5\\% level on the robust basis: $t$ and $p$ use misspecification-robust standard errors');
    expect(all).toContain('covariance weighting');
    res.factors.forEach((f, k) => {
      const cells = rows[k + 1].replace(/ \\\\$/, '').split(' & ');
      expect(cells[2]).toBe(formatFixed(f.robust!.tB, 2, { minus: '$-$' }));
      expect(cells[5]).toBe(formatFixed(f.robust!.tLambda, 2, { minus: '$-$' }));
    });
  });
});

describe('result JSON', () => {
  it('includes everything: the whole ledger with basis, verdicts per basis, robust and bootstrap fields', async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/result.json`).expect(200);
    const j = JSON.parse(r.text);
    expect(ledgerResultSchema.parse(j)).toEqual(run.result);
    for (const k of ['basis', 'verdictBasis', 'robustNote', 'bootstrap', 'caution', 'lagWarning', 'options', 'pricingErrors', 'famaMacBeth']) expect(j).toHaveProperty(k);
    for (const f of j.factors) for (const k of ['robust', 'bootstrap', 'verdicts', 'verdict']) expect(f).toHaveProperty(k);
  });
});
