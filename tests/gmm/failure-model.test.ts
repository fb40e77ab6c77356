/**
 * lib/gmm's one failure model (lib/gmm/errors.ts): caller mistakes throw GmmInputError, expected
 * numerical outcomes come back as `{ ok: false, code, message }`. Two kinds of check:
 * - the public surface, read by the TypeScript compiler itself (the `typescript` package's checker
 *   on lib/gmm/index.ts): no exported function returns a bare `null` for a failure, and the library
 *   throws no other error class;
 * - behaviour on data built so that a matrix is exactly singular (a factor with zero covariance with
 *   every asset, the same construction as validation.test.ts): every entry point that used to throw
 *   or return null now returns the typed failure, and the deep-check chunk runner passes it on.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import {
  bootstrapSdfTests,
  fitRecentred,
  GmmInputError,
  prepareBootstrap,
  prepareMoments,
  prepareSubsetSweep,
  robustInfluence,
  fitSdfGmm,
  spanningCore,
  squaredSharpeCore,
  subsetSweep,
  waldJoint,
  type BootstrapInput,
  type SubsetSweepInput,
} from '../../lib/gmm/index';
import { runChunk } from '../../server/jobs/tasks';
import { isChunkFailure } from '../../server/jobs/pool';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { simulateEconomy, zeroCovarianceEconomy } from './helpers';

const LIB = join(__dirname, '../../lib/gmm');

/** Exported functions whose `null` is a value, not a failure (documented at each). */
const NULL_IS_A_VALUE = new Set([
  'okValue', // the value of a typed result for embedding in a ledger, null where the ledger shows "not available"
  'lagWarningText', // no warning to give
  'cautionText', // no caution to give
  'thetaCut', // no squared-Sharpe ranking in this sweep (not asked for, or no traded candidate), so no cut
]);

describe('the public surface (TypeScript checker on lib/gmm/index.ts)', () => {
  const program = ts.createProgram([join(LIB, 'index.ts')], { strict: true, target: ts.ScriptTarget.ES2022, module: ts.ModuleKind.ESNext, moduleResolution: ts.ModuleResolutionKind.Bundler, skipLibCheck: true, noEmit: true });
  const checker = program.getTypeChecker();
  const index = program.getSourceFile(join(LIB, 'index.ts'))!;
  const exports = checker.getExportsOfModule(checker.getSymbolAtLocation(index)!);
  const functions = exports
    .map((s) => (s.flags & ts.SymbolFlags.Alias ? checker.getAliasedSymbol(s) : s))
    .filter((s) => s.flags & ts.SymbolFlags.Function);

  it('the checker sees the library (more than 60 exported functions)', () => {
    expect(functions.length).toBeGreaterThan(60);
  });

  it('no exported function returns null for a failure (typed results instead)', () => {
    const offenders: string[] = [];
    for (const fn of functions) {
      if (NULL_IS_A_VALUE.has(fn.name)) continue;
      const decl = fn.valueDeclaration ?? fn.declarations?.[0];
      if (!decl) continue;
      for (const sig of checker.getTypeOfSymbolAtLocation(fn, decl).getCallSignatures()) {
        const ret = checker.getReturnTypeOfSignature(sig);
        const parts = ret.isUnion() ? ret.types : [ret];
        if (parts.some((p) => p.flags & ts.TypeFlags.Null)) offenders.push(`${fn.name}(): ${checker.typeToString(ret)}`);
      }
    }
    expect(offenders).toEqual([]);
  });

  it('the allowed null-returning functions still exist (the allow-list cannot go stale)', () => {
    const names = new Set(functions.map((f) => f.name));
    for (const n of NULL_IS_A_VALUE) expect(names.has(n), n).toBe(true);
  });

  it('the library throws only GmmInputError (no other error class in lib/gmm)', () => {
    const thrown: string[] = [];
    for (const file of readdirSync(LIB).filter((f) => f.endsWith('.ts'))) {
      const src = readFileSync(join(LIB, file), 'utf8');
      for (const m of src.matchAll(/throw new (\w+)/g)) if (m[1] !== 'GmmInputError') thrown.push(`${file}: ${m[1]}`);
    }
    expect(thrown).toEqual([]);
  });
});

describe('typed failures on an exactly singular model', () => {
  // f₂ alternates ±0.01 around its mean while the returns repeat in pairs of periods, so
  // Cov(R, f₂) = 0 exactly: X'WX is singular although every series passes validation.
  const { returns, factors } = zeroCovarianceEconomy();
  const factorNames = ['M', 'Z'];
  const boot: BootstrapInput = {
    returns,
    factors,
    factorNames,
    options: { stage: 'second', weighting: 'identity', lags: 1, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 1 },
  };
  const sweep: SubsetSweepInput = { returns, factors, factorNames, options: { lags: 1, form: 'centred', factorMeansKnown: false, weighting: 'identity' } };

  it('prepareBootstrap and bootstrapSdfTests return code singular, not a throw', () => {
    for (const r of [prepareBootstrap(boot), bootstrapSdfTests(boot)]) {
      expect(r.ok).toBe(false);
      if (r.ok) continue;
      expect(r.code).toBe('singular');
      expect(r.message).toMatch(/singular/);
    }
  });

  it('a caller mistake still throws GmmInputError (draws out of range)', () => {
    expect(() => prepareBootstrap({ ...boot, options: { ...boot.options, draws: 5 } })).toThrow(GmmInputError);
    expect(() => prepareSubsetSweep({ ...sweep, options: { ...sweep.options, lags: -1 } })).toThrow(GmmInputError);
  });

  it('prepareSubsetSweep and subsetSweep return code singular, not a throw', () => {
    for (const r of [prepareSubsetSweep(sweep), subsetSweep(sweep)]) {
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.code).toBe('singular');
    }
  });

  it('the deep-check chunk runner hands the typed failure on (every chunk, and the summary)', () => {
    const key = 'failure-model-boot';
    const chunk = runChunk({ op: 'bootstrap', key, input: boot, from: 0, to: 10 });
    expect(isChunkFailure(chunk)).toBe(true);
    if (!isChunkFailure(chunk)) return;
    expect(chunk.chunkFailure.code).toBe('singular');
    // the user's message comes from the one mapping in shared/gmm-messages.ts
    expect(gmmFailureMessage(chunk.chunkFailure)).toMatch(/^The estimation could not be solved: The model cannot be estimated on these data: /);
    expect(isChunkFailure(runChunk({ op: 'bootstrap-summary', key, input: boot, batches: [] }))).toBe(true);
    expect(isChunkFailure(runChunk({ op: 'subset-sweep', key: 'failure-model-sweep', input: sweep, from: 1, to: 4 }))).toBe(true);
  });

  it('the draw estimator (fitRecentred) returns code singular with the matrix named', () => {
    const m = prepareMoments(returns, factors);
    const r = fitRecentred(m, null, { stage: 'second', weighting: 'identity', lags: 1, form: 'centred', factorMeansKnown: false, block: null });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.code).toBe('singular');
      expect(r.matrix).toBeTruthy();
    }
  });

  it('waldJoint on a singular covariance returns code singular; on a regular one the χ² value (Wald 1943: b²/Var)', () => {
    const bad = waldJoint([1, 2], [[1, 1], [1, 1]], 2);
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.code).toBe('singular');
    const good = waldJoint([1, 0], [[1, 0], [0, 4]], 2, [0]);
    expect(good.ok && good.stat).toBe(1);
  });

  it('spanningCore and squaredSharpeCore on collinear factors return code singular', () => {
    const e = simulateEconomy({ T: 120, N: 4, K: 2, seed: 3 });
    // a third factor equal to the first: the other factors' covariance is singular for the test of the second
    const f3 = e.factors.map((r) => [r[0], r[1], r[0]]);
    const m = prepareMoments(e.returns, f3);
    const sp = spanningCore(m, [1], 0);
    expect(sp.ok).toBe(false);
    if (!sp.ok) expect(sp.code).toBe('singular');
    const sh = squaredSharpeCore(m.F, m.T, m.K, m.meanF, m.sigmaF, [0, 2]);
    expect(sh.ok).toBe(false);
    if (!sh.ok) expect(sh.code).toBe('singular');
  });

  it('robustInfluence on a singular first-stage system returns code singular', () => {
    const m = prepareMoments(returns, factors);
    // the first-stage fit itself fails on these data; the influence of a fit built on a regular
    // sample is evaluated on the singular moments to reach robustInfluence's own check
    const e = simulateEconomy({ T: 40, N: 3, K: 2, seed: 8 });
    const fit = fitSdfGmm(prepareMoments(e.returns, e.factors), { stage: 'first', lags: 1 });
    if (!fit.ok) throw new Error(fit.message);
    const zeroX = { ...fit, X: new Float64Array(fit.X.length) };
    const r = robustInfluence(m, zeroX);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.code).toBe('singular');
  });
});
