/**
 * What a worker thread does with one chunk of a deep check. Pure computation on lib/gmm; no
 * database, no I/O. A chunk is small (a few dozen bootstrap draws, about 1/200 of a sweep's subsets
 * summarised as a bounded partial, a few windows) so that progress moves and a cancel takes effect between chunks.
 *
 * A heavy run (server/jobs/run-estimator.ts) is one task 'estimate': estimateRun, the same pure
 * function the synchronous POST /runs calls.
 *
 * Each chunk carries the job's input, normally as a {@link SharedInput}: serialised once per job
 * into a SharedArrayBuffer, which a thread receives without a copy. A thread reads it back once per
 * job and keeps the last few inputs and prepared plans (keyed by job and attempt), so the shared
 * work (decoding the series, the original fit, the N×N products) is done once per thread.
 */
import {
  estimateWindows,
  prepareBootstrap,
  holdoutPricing,
  prepareSubsetSweep,
  rollingHoldout,
  runBootstrapDraws,
  summariseBootstrap,
  summariseRolling,
  mergeSweepPartials,
  summariseSubsetSweep,
  sweepChunk,
  type BootstrapBatch,
  type BootstrapInput,
  type BootstrapPlan,
  type HoldoutInput,
  type RollingHoldoutInput,
  type RollingHoldoutResult,
  type RollingHoldoutRow,
  type RollingInput,
  type RollingPoint,
  type SubsetSweepInput,
  type SweepPlan,
  type SweepPartial,
  type GmmFailure,
  type GmmResult,
} from '../../lib/gmm/index';
import { readlinkSync } from 'node:fs';
import { getPriority } from 'node:os';
import { isShared, readShared, type TaskInput } from './shared-input';
import { keptLast } from '../kept-last';
import type { ChunkFailure } from './pool';
import { estimateRun, type RunEstimateInput } from '../services/run-estimate';

export type ChunkTask =
  | { op: 'ping' }
  /** A heavy run's whole estimation (one task: the ledger is one lib/gmm call). */
  | { op: 'estimate'; task: TaskInput<RunEstimateInput> }
  | { op: 'bootstrap'; key: string; input: TaskInput<BootstrapInput>; from: number; to: number }
  | { op: 'bootstrap-summary'; key: string; input: TaskInput<BootstrapInput>; batches: BootstrapBatch[] }
  | { op: 'subset-sweep'; key: string; input: TaskInput<SubsetSweepInput>; from: number; to: number }
  | { op: 'subset-sweep-summary'; key: string; input: TaskInput<SubsetSweepInput>; parts: SweepPartial[] }
  | { op: 'rolling'; key: string; input: TaskInput<RollingInput>; from: number; to: number }
  | { op: 'rolling-summary'; key: string; input: TaskInput<RollingInput>; points: RollingPoint[] }
  | { op: 'holdout-split'; key: string; input: HoldoutInput }
  | { op: 'holdout-rolling'; key: string; input: TaskInput<RollingHoldoutInput>; from: number; to: number }
  | { op: 'holdout-rolling-summary'; key: string; input: TaskInput<RollingHoldoutInput>; parts: HoldoutBlocks[] };

/** Blocks [from, to) of a rolling hold-out, with each block's α₂'α₂ and m₂'m₂ for pooling. */
export interface HoldoutBlocks {
  readonly rows: RollingHoldoutRow[];
  readonly sse: number[];
  readonly sst: number[];
}

/**
 * Blocks j ∈ [from, to) of the rolling hold-out (windows [j·h, j·h + n), blocks of h periods after
 * each): lib/gmm's rollingHoldout on the rows [from·h, (to − 1)·h + n + h), which holds exactly
 * those windows and blocks; the rows' indices are shifted back to the whole sample.
 */
export function holdoutRollingBlocks(input: RollingHoldoutInput, from: number, to: number): HoldoutBlocks {
  const { length, step } = input.window;
  const T = input.returns.length;
  const a = from * step;
  const b = Math.min(T, (to - 1) * step + length + step);
  const part = rollingHoldout({
    ...input,
    returns: input.returns.slice(a, b),
    factors: input.factors.slice(a, b),
    ...(input.dates ? { dates: input.dates.slice(a, b) } : {}),
    window: { kind: 'rolling', length, step },
  });
  const rows = part.rows.map((r) => ({ ...r, start: r.start + a, end: r.end + a, blockEnd: r.blockEnd + a }));
  const sse = rows.map((r) => r.alpha.reduce((s, x) => s + x * x, 0));
  const sst = rows.map((r) => {
    if (!r.ok) return 0;
    const N = r.alpha.length;
    let out = 0;
    for (let i = 0; i < N; i++) {
      let m = 0;
      for (let t = r.end; t < r.blockEnd; t++) m += input.returns[t][i];
      m /= r.blockEnd - r.end;
      out += m * m;
    }
    return out;
  });
  return { rows, sse, sst };
}

/** The rolling hold-out's result from its chunks (the same numbers rollingHoldout gives on the whole sample). */
export function summariseHoldoutBlocks(input: RollingHoldoutInput, parts: readonly HoldoutBlocks[]): RollingHoldoutResult {
  const rows = parts.flatMap((p) => p.rows);
  const sse = parts.flatMap((p) => p.sse);
  const sst = parts.flatMap((p) => p.sst);
  let e = 0;
  let m = 0;
  let abs = 0;
  let ok = 0;
  rows.forEach((r, j) => {
    if (!r.ok) return;
    e += sse[j];
    m += sst[j];
    abs += r.meanAbsAlpha ?? 0;
    ok += 1;
  });
  const first = rollingHoldout({ ...input, returns: input.returns.slice(0, input.window.length + 2), factors: input.factors.slice(0, input.window.length + 2), dates: input.dates?.slice(0, input.window.length + 2) });
  return { ...first, rows, pooledR2oos: ok > 0 && m > 0 ? 1 - e / m : null, meanAbsAlpha: ok > 0 ? abs / ok : null };
}

/** Prepared plans by job key; a typed failure is kept too, so the job's other chunks return it at once. */
const plans = new Map<string, GmmResult<{ plan: BootstrapPlan | SweepPlan }>>();
function cached<T extends BootstrapPlan | SweepPlan>(key: string, make: () => GmmResult<{ plan: T }>): GmmResult<{ plan: T }> {
  return keptLast(plans, key, make) as GmmResult<{ plan: T }>;
}

/** Inputs read back from their shared buffers, by job key (the last few). */
const inputs = new Map<string, unknown>();
function inputOf<T>(key: string, v: TaskInput<T>): T {
  return isShared(v) ? (keptLast(inputs, key, () => readShared(v)) as T) : v;
}

/** A summary is a job's last task: its input and plan leave this thread's caches. */
function forget(key: string): void {
  plans.delete(key);
  inputs.delete(key);
}

const failed = (f: GmmFailure): ChunkFailure => ({ chunkFailure: f });

/** Runs one chunk (in a worker thread; also callable in-process). */
export function runChunk(task: ChunkTask): unknown {
  switch (task.op) {
    case 'ping':
      return { pong: true, threadId: 0 };
    case 'estimate':
      return estimateRun(isShared(task.task) ? readShared(task.task) : task.task);
    case 'bootstrap': {
      const input = inputOf(task.key, task.input);
      const p = cached(task.key, () => prepareBootstrap(input));
      return p.ok ? runBootstrapDraws(p.plan, input.options, task.from, task.to) : failed(p);
    }
    case 'bootstrap-summary': {
      const input = inputOf(task.key, task.input);
      const p = cached(task.key, () => prepareBootstrap(input));
      forget(task.key);
      return p.ok ? summariseBootstrap(p.plan, input, task.batches) : failed(p);
    }
    case 'subset-sweep': {
      const input = inputOf(task.key, task.input);
      const p = cached(task.key, () => prepareSubsetSweep(input));
      return p.ok ? sweepChunk(p.plan, task.from, task.to) : failed(p);
    }
    case 'subset-sweep-summary': {
      const input = inputOf(task.key, task.input);
      const p = cached(task.key, () => prepareSubsetSweep(input));
      forget(task.key);
      // exact merge of the chunks' partials; the one-SE figures were counted by the chunks (a θ̂-only
      // second pass here only when the best subset is not the expected one)
      return p.ok ? summariseSubsetSweep(p.plan, mergeSweepPartials(p.plan, task.parts)) : failed(p);
    }
    case 'rolling':
      return estimateWindows(inputOf(task.key, task.input), task.from, task.to);
    case 'rolling-summary': {
      const input = inputOf(task.key, task.input);
      forget(task.key);
      return summariseRolling(input, task.points);
    }
    case 'holdout-split': {
      const r = holdoutPricing(task.input);
      if (!r.ok) return failed({ ...r, message: `The hold-out could not be estimated: ${r.message}` });
      return { mode: 'split', ...r };
    }
    case 'holdout-rolling':
      return holdoutRollingBlocks(inputOf(task.key, task.input), task.from, task.to);
    case 'holdout-rolling-summary': {
      const input = inputOf(task.key, task.input);
      forget(task.key);
      return { mode: 'rolling', ...summariseHoldoutBlocks(input, task.parts) };
    }
  }
}

/** This thread's scheduling niceness (Linux; null elsewhere), which ping reports. */
function threadNice(): number | null {
  try {
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
    return Number.isInteger(tid) && tid > 0 ? getPriority(tid) : null;
  } catch {
    return null;
  }
}

/** Piscina's entry point. Errors keep their name and message across the thread boundary. */
export default function handler(task: ChunkTask): unknown {
  if (task.op === 'ping') return { pong: true, nice: threadNice() };
  return runChunk(task);
}
