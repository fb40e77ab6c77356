/**
 * What a worker thread does with one chunk of a deep check. Pure computation on lib/gmm; no
 * database, no I/O. A chunk is small (a few dozen bootstrap draws, a few hundred subsets, a few
 * windows) so that progress moves and a cancel takes effect between chunks.
 *
 * Each chunk carries the job's input; the worker keeps the last few prepared plans (keyed by job
 * and attempt) so the shared work (the original fit, the N×N products) is done once per thread.
 */
import {
  evaluateSubsets,
  estimateWindows,
  prepareBootstrap,
  prepareSubsetSweep,
  runBootstrapDraws,
  summariseBootstrap,
  summariseRolling,
  summariseSubsetSweep,
  type BootstrapBatch,
  type BootstrapInput,
  type BootstrapPlan,
  type RollingInput,
  type RollingPoint,
  type SubsetSweepInput,
  type SweepPlan,
  type SweepRow,
} from '../../lib/gmm/index';

export type ChunkTask =
  | { op: 'ping' }
  | { op: 'bootstrap'; key: string; input: BootstrapInput; from: number; to: number }
  | { op: 'bootstrap-summary'; key: string; input: BootstrapInput; batches: BootstrapBatch[] }
  | { op: 'subset-sweep'; key: string; input: SubsetSweepInput; from: number; to: number }
  | { op: 'subset-sweep-summary'; key: string; input: SubsetSweepInput; rows: SweepRow[] }
  | { op: 'rolling'; key: string; input: RollingInput; from: number; to: number }
  | { op: 'rolling-summary'; key: string; input: RollingInput; points: RollingPoint[] };

const plans = new Map<string, BootstrapPlan | SweepPlan>();
function cached<T extends BootstrapPlan | SweepPlan>(key: string, make: () => T): T {
  const hit = plans.get(key);
  if (hit) return hit as T;
  const plan = make();
  plans.set(key, plan);
  while (plans.size > 4) plans.delete(plans.keys().next().value as string);
  return plan;
}

/** Runs one chunk (in a worker thread; also callable in-process). */
export function runChunk(task: ChunkTask): unknown {
  switch (task.op) {
    case 'ping':
      return { pong: true, threadId: 0 };
    case 'bootstrap': {
      const plan = cached(task.key, () => prepareBootstrap(task.input));
      return runBootstrapDraws(plan, task.input.options, task.from, task.to);
    }
    case 'bootstrap-summary': {
      const plan = cached(task.key, () => prepareBootstrap(task.input));
      plans.delete(task.key);
      return summariseBootstrap(plan, task.input, task.batches);
    }
    case 'subset-sweep': {
      const plan = cached(task.key, () => prepareSubsetSweep(task.input));
      return evaluateSubsets(plan, task.from, task.to);
    }
    case 'subset-sweep-summary': {
      const plan = cached(task.key, () => prepareSubsetSweep(task.input));
      plans.delete(task.key);
      return summariseSubsetSweep(plan, task.rows, task.input.options);
    }
    case 'rolling':
      return estimateWindows(task.input, task.from, task.to);
    case 'rolling-summary':
      return summariseRolling(task.input, task.points);
  }
}

/** Piscina's entry point. Errors keep their name and message across the thread boundary. */
export default function handler(task: ChunkTask): unknown {
  if (task.op === 'ping') return { pong: true };
  return runChunk(task);
}
