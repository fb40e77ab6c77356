/**
 * Test helpers: a small seeded PRNG (mulberry32 + Box–Muller; common practice), an invented
 * simulated economy, a bridge to the Python reference and closeness checks that record the
 * largest relative disagreement seen.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { estimateLedger as estimateLedgerOutcome, type GmmResult, type LedgerInput, type LedgerResult } from '../../lib/gmm/index';
import { boxMuller, mulberry32 } from '../../lib/gmm/random';

export { mulberry32 };

/** The value of a typed result that must have succeeded (throws with the failure's code and message otherwise). */
export function okOf<T extends object>(r: GmmResult<T>): T & { readonly ok: true } {
  if (!r.ok) throw new Error(`expected success, got ${r.code}: ${r.message}`);
  return r;
}

/** estimateLedger for tests that expect a ledger: unwraps `{ ok: true, ledger }`, throws on a typed failure. */
export function estimateLedger(input: LedgerInput): LedgerResult {
  const r = estimateLedgerOutcome(input);
  if (!r.ok) throw new Error(`estimateLedger: ${r.code}: ${r.message}`);
  return r.ledger;
}

/** Standard normal draws: Box–Muller on mulberry32 (both from lib/gmm/random.ts). */
export function normalSampler(seed: number): () => number {
  return boxMuller(mulberry32(seed));
}

export interface Economy {
  returns: number[][];
  factors: number[][];
  betas: number[][];
}

/**
 * An invented economy: K factors with AR(1) persistence `phi` and cross-correlation `rho`,
 * means `mu`; N assets with loadings in [0.2, 1.6], expected excess return β'λ (λ = mu) plus a
 * pricing error `alphaScale`·N(0,1), idiosyncratic noise `noise`.
 */
/**
 * T = 40 periods, N = 3 assets, K = 2 factors where f₂ has exactly zero covariance with every asset:
 * the returns repeat in pairs of periods while f₂ alternates ±0.01 around its mean. Every series
 * passes validation, but C'WC (X'WX) is singular: the data for typed 'singular' failures.
 */
export function zeroCovarianceEconomy(): { returns: number[][]; factors: number[][] } {
  const z = simulateEconomy({ T: 20, N: 3, K: 1, seed: 5 });
  const returns: number[][] = [];
  const factors: number[][] = [];
  for (let t = 0; t < 20; t++) {
    returns.push(z.returns[t], z.returns[t]);
    factors.push([z.factors[t][0], 0.01], [z.factors[t][0], -0.01]);
  }
  return { returns, factors };
}

export function simulateEconomy(opts: {
  T: number;
  N: number;
  K: number;
  seed: number;
  phi?: number;
  rho?: number;
  mu?: number[];
  sd?: number[];
  noise?: number;
  alphaScale?: number;
}): Economy {
  const { T, N, K, seed } = opts;
  const z = normalSampler(seed);
  const phi = opts.phi ?? 0.2;
  const rho = opts.rho ?? 0.3;
  const mu = opts.mu ?? Array.from({ length: K }, (_, k) => 0.004 + 0.002 * k);
  const sd = opts.sd ?? Array.from({ length: K }, (_, k) => 0.03 + 0.01 * k);
  const noise = opts.noise ?? 0.02;
  const betas = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 1.4 * (z() * 0.25 + 0.5)));
  const alphas = Array.from({ length: N }, () => (opts.alphaScale ?? 0.0005) * z());
  const factors: number[][] = [];
  let prev = new Array<number>(K).fill(0);
  for (let t = 0; t < T; t++) {
    const common = z();
    const e = Array.from({ length: K }, () => Math.sqrt(1 - rho) * z() + Math.sqrt(rho) * common);
    const cur = e.map((v, k) => phi * prev[k] + Math.sqrt(1 - phi * phi) * v);
    prev = cur;
    factors.push(cur.map((v, k) => mu[k] + sd[k] * v));
  }
  const returns = factors.map((f) =>
    betas.map((bi, i) => {
      let r = alphas[i];
      for (let k = 0; k < K; k++) r += bi[k] * f[k];
      return r + noise * z();
    }),
  );
  return { returns, factors, betas };
}

const here = dirname(fileURLToPath(import.meta.url));
export const REFERENCE_DIR = join(here, '..', 'reference');
export const REFERENCE_SCRIPT = join(REFERENCE_DIR, 'gmm_reference.py');
export const FIXTURE_DIR = join(here, '..', 'fixtures');
/** The Debian packages the Python references need (installed by scripts/test-prereqs.ts as root). */
export const PYTHON_INSTALL = 'sudo apt-get install -y python3-numpy python3-scipy python3-statsmodels python3-mpmath';

/**
 * How the Python-backed reference values are obtained (environment variable KEELSON_FIXTURES):
 * - unset / 'read' (npm test): from the committed JSON fixture tests/fixtures/NAME.json; no Python
 *   is needed. The fixture stores the SHA-256 of the exact input it was computed from, so a changed
 *   input fails at once (regenerate with `npm run fixtures:write`).
 * - 'write' (`npm run fixtures:write`): run the Python reference and (re)write the fixture.
 * - 'check' (`npm run fixtures:check`, run by .ci/run before npm test): run the Python reference
 *   and fail if any value moved from the committed fixture by more than FIXTURE_MOVE_TOL relative.
 */
export const fixtureMode = (process.env.KEELSON_FIXTURES ?? 'read') as 'read' | 'write' | 'check';
/** A value "moved" when it changed by more than 2^12 ε ≈ 9.1e-13 relative (room for BLAS summation order, far below every test tolerance). */
export const FIXTURE_MOVE_TOL = 4096 * Number.EPSILON;

function sha256(input: unknown): string {
  return createHash('sha256').update(JSON.stringify(input)).digest('hex');
}

let versionsCache: Record<string, string> | null = null;
function pythonVersions(): Record<string, string> {
  if (versionsCache) return versionsCache;
  const probe = spawnSync(
    '/usr/bin/python3',
    ['-c', 'import json, sys, numpy, scipy, statsmodels, mpmath; print(json.dumps({"python": sys.version.split()[0], "numpy": numpy.__version__, "scipy": scipy.__version__, "statsmodels": statsmodels.__version__, "mpmath": mpmath.__version__}))'],
    { encoding: 'utf8' },
  );
  if (probe.error || probe.status !== 0)
    throw new Error(`The Python reference needs /usr/bin/python3 with numpy, scipy, statsmodels and mpmath (Debian packages). Install them:\n  ${PYTHON_INSTALL}\n${probe.stderr ?? ''}`);
  versionsCache = JSON.parse(probe.stdout) as Record<string, string>;
  return versionsCache;
}

/** Run a reference script (`python3 SCRIPT IN.json OUT.json`) on `input`. */
function runPython(script: string, input: unknown): unknown {
  pythonVersions();
  const dir = mkdtempSync(join(tmpdir(), 'keelson-ref-'));
  const inFile = join(dir, 'in.json');
  const outFile = join(dir, 'out.json');
  writeFileSync(inFile, JSON.stringify(input));
  const r = spawnSync('/usr/bin/python3', [script, inFile, outFile], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`reference ${script} failed: ${r.stderr}`);
  return JSON.parse(readFileSync(outFile, 'utf8'));
}

/** Paths (a.b[3].c) where two JSON values differ: structure, strings, booleans exactly; numbers beyond `tol` relative. */
export function movedValues(fresh: unknown, committed: unknown, tol: number, path = '', out: string[] = []): string[] {
  if (out.length > 20) return out;
  if (typeof fresh === 'number' && typeof committed === 'number') {
    if (fresh !== committed && !(Math.abs(fresh - committed) <= tol * Math.max(Math.abs(fresh), Math.abs(committed)))) out.push(`${path}: ${committed} → ${fresh}`);
  } else if (Array.isArray(fresh) && Array.isArray(committed)) {
    if (fresh.length !== committed.length) out.push(`${path}: length ${committed.length} → ${fresh.length}`);
    else fresh.forEach((v, i) => movedValues(v, committed[i], tol, `${path}[${i}]`, out));
  } else if (fresh && committed && typeof fresh === 'object' && typeof committed === 'object' && !Array.isArray(fresh) && !Array.isArray(committed)) {
    const keys = new Set([...Object.keys(fresh), ...Object.keys(committed)]);
    for (const k of keys) movedValues((fresh as Record<string, unknown>)[k], (committed as Record<string, unknown>)[k], tol, path ? `${path}.${k}` : k, out);
  } else if (fresh !== committed) out.push(`${path}: ${JSON.stringify(committed)} → ${JSON.stringify(fresh)}`);
  return out;
}

interface Fixture {
  readonly fixture: string;
  readonly generatedBy: string;
  readonly versions: Record<string, string>;
  readonly inputSha256: string;
  readonly output: unknown;
}

/**
 * Reference values from a Python script for `input`, through the committed fixture
 * tests/fixtures/NAME.json (see {@link fixtureMode}).
 */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- untyped JSON from the Python reference
export function pythonFixture(name: string, script: string, input: unknown): any {
  const file = join(FIXTURE_DIR, `${name}.json`);
  const digest = sha256(input);
  if (fixtureMode === 'read') {
    if (!existsSync(file)) throw new Error(`Missing fixture ${file}. Generate it (needs Python: ${PYTHON_INSTALL}) with: npm run fixtures:write`);
    const fx = JSON.parse(readFileSync(file, 'utf8')) as Fixture;
    if (fx.inputSha256 !== digest)
      throw new Error(`Fixture ${file} was computed from other inputs (the test data changed). Regenerate it (needs Python: ${PYTHON_INSTALL}) with: npm run fixtures:write`);
    return fx.output;
  }
  const output = runPython(script, input);
  const fx: Fixture = {
    fixture: name,
    generatedBy: `/usr/bin/python3 tests/reference/${basename(script)} IN.json OUT.json, IN = the test's input (SHA-256 below), driven by pythonFixture in tests/gmm/helpers.ts; regenerate with npm run fixtures:write`,
    versions: pythonVersions(),
    inputSha256: digest,
    output,
  };
  if (fixtureMode === 'check') {
    if (!existsSync(file)) throw new Error(`fixtures:check: ${file} is not committed; run npm run fixtures:write`);
    const old = JSON.parse(readFileSync(file, 'utf8')) as Fixture;
    const moved = [
      ...(old.inputSha256 === digest ? [] : ['inputSha256: the committed fixture was computed from other inputs']),
      ...movedValues(output, old.output, FIXTURE_MOVE_TOL, 'output'),
    ];
    if (moved.length > 0)
      throw new Error(`fixtures:check: ${name} moved (versions then ${JSON.stringify(old.versions)}, now ${JSON.stringify(fx.versions)}):\n  ${moved.join('\n  ')}`);
    return old.output;
  }
  mkdirSync(FIXTURE_DIR, { recursive: true });
  writeFileSync(file, `{\n"fixture": ${JSON.stringify(fx.fixture)},\n"generatedBy": ${JSON.stringify(fx.generatedBy)},\n"versions": ${JSON.stringify(fx.versions)},\n"inputSha256": ${JSON.stringify(fx.inputSha256)},\n"output": ${JSON.stringify(fx.output)}\n}\n`);
  return output;
}

/** The numpy/scipy/statsmodels reference (tests/reference/gmm_reference.py) on `input`, through fixture NAME. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- untyped JSON from the Python reference
export function runReference(name: string, input: unknown): any {
  return pythonFixture(name, REFERENCE_SCRIPT, input);
}

/** Largest relative disagreement measured by `relDiff` in this process (for the report). */
export const disagreement = { max: 0, where: '' };

/** |a − b| / max(|b|, floor); records the maximum. */
export function relDiff(a: number, b: number, where = '', floor = 1e-300): number {
  const d = Math.abs(a - b) / Math.max(Math.abs(b), floor);
  if (d > disagreement.max) {
    disagreement.max = d;
    disagreement.where = where;
  }
  return d;
}

/**
 * Elementwise relative closeness of (nested) arrays or numbers. For arrays the floor of the
 * denominator is 1e-6 × the largest |element| of the expected array, so entries that are zero by
 * construction are compared on the array's scale.
 */
export function maxRel(actual: unknown, expected: unknown, where = ''): number {
  const a = flat(actual);
  const b = flat(expected);
  if (a.length !== b.length) throw new Error(`${where}: length ${a.length} vs ${b.length}`);
  const scale = Math.max(...b.map(Math.abs), 0);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, relDiff(a[i], b[i], where, Math.max(1e-6 * scale, 1e-300)));
  return worst;
}

function flat(x: unknown): number[] {
  if (typeof x === 'number') return [x];
  if (ArrayBuffer.isView(x)) return Array.from(x as unknown as ArrayLike<number>);
  if (Array.isArray(x)) return x.flatMap(flat);
  throw new Error(`not numeric: ${JSON.stringify(x)}`);
}
