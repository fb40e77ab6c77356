/**
 * What the API and the queue workers agree on in queue mode (KEELSON_REDIS_URL set): the BullMQ
 * queue and key names, the job payloads, and a JSON codec that keeps non-finite numbers.
 *
 * One deep check = one BullMQ flow: a parent job ('summary') whose children are the chunks
 * ('chunk', one per range of draws, subset masks or windows). The chunk input — the packed
 * edition slice and the spec, as lib/gmm takes it — is stored ONCE in Redis under the flow's key
 * (`keelson:input:<flow>`, with a TTL) and every chunk names that key; no chunk carries a copy.
 * The stored input is binary ({@link packInput}); chunk values and results are JSON ({@link encode}).
 *
 * A chunk's value is written to the flow's hash of parts (`keelson:parts:<flow>`, field = the
 * range's start) and the chunk job returns only a small {@link ChunkDone} marker. BullMQ copies a
 * job's return value into the job and into the queue's event stream (trimmed at about 10,000
 * events), which every API's QueueEvents connection reads and parses: with the values inline, a
 * 20-candidate sweep put 8 × 28.6 KB into that stream (docs/scaling.md has the measurements).
 */
import { serialize } from 'node:v8';
import { readShared } from './shared-input';
import type { CheckInput } from '../services/jobs-input';
import type { RunEstimateInput } from '../services/run-estimate';

/** Redis key prefix of the BullMQ queue. */
export const QUEUE_PREFIX = 'keelson';
/** The one queue: chunks and summaries of every deep check. */
export const QUEUE_NAME = 'deep-checks';
/** Pub/sub channel on which a cancel reaches every worker at once (message: the flow id). */
export const CANCEL_CHANNEL = 'keelson:cancel';
/** How long a check's input (and a cancel mark) stays in Redis: a week, refreshed while the API follows the flow. */
export const INPUT_TTL_SECONDS = 7 * 24 * 3600;

export const inputKey = (flow: string) => `keelson:input:${flow}`;
export const cancelKey = (flow: string) => `keelson:cancelled:${flow}`;
/** A flow's chunk values (a hash: field = the range's start, value = encode({ from, to, value })). */
export const partsKey = (flow: string) => `keelson:parts:${flow}`;

/**
 * What a chunk job returns: its range; the value itself is in partsKey(flow). A flow enqueued by an
 * earlier release may still have chunks that returned `{ from, to, value }` inline.
 */
export interface ChunkDone {
  from: number;
  to: number;
  stored: true;
}
/** A deep check's flow id: one per job attempt, so a restarted job never meets the old one's chunks. */
export const flowId = (jobId: number, attempt: number) => `job-${jobId}-${attempt}`;
export const chunkId = (flow: string, index: number) => `${flow}-c${index}`;
/**
 * A heavy run's BullMQ job id: one plain job named 'estimate' (no flow: the ledger is one lib/gmm
 * call), its input stored once under inputKey(`run-<id>`) like a deep check's.
 */
export const runJobId = (runId: number) => `run-${runId}`;

export interface ChunkJobData {
  flow: string;
  kind: CheckInput['kind'];
  /** Range in the check's own units (draw indices, subset masks − 1, window indices), half-open. */
  from: number;
  to: number;
}
/** A heavy run's job: its stored input is under inputKey(flow). */
export interface EstimateJobData {
  flow: string;
  kind: 'estimate';
}
export interface SummaryJobData {
  flow: string;
  kind: CheckInput['kind'];
  total: number;
}

/** The stored input: what the chunks and the summary compute on. */
export type StoredInput = { [K in CheckInput['kind']]: Pick<Extract<CheckInput, { kind: K }>, 'kind' | 'input'> }[CheckInput['kind']];
/** A heavy run's stored input: estimateRun's argument. */
export interface StoredRunInput {
  kind: 'estimate';
  input: RunEstimateInput;
}

/**
 * The stored input's bytes: node:v8's serialisation (the structured-clone format) of the check's
 * or run's input, the very bytes the embedded pool shares with its threads (shared-input.ts). A
 * worker copies them into a SharedArrayBuffer for its threads without decoding them itself, so its
 * main thread (BullMQ's locks and Redis replies) allocates nothing per flow; every double, −0, NaN
 * and ±∞ comes back as it was, and the bytes are about half the JSON text's. The format is V8's:
 * the API and the workers run the same Node.js major version (docs/scaling.md).
 */
export function packInput(input: unknown): Buffer {
  return serialize(input);
}

/** First byte of a stored input written as JSON text (`{"kind":…,"input":…}`) by releases before packInput. */
const JSON_INPUT_BYTE = 0x7b;

/**
 * A stored input as pool-thread bytes: packInput's bytes as they are; a JSON input of an earlier
 * release (a flow re-attached across an upgrade) is decoded and serialised the new way.
 */
export function inputBytes(stored: Uint8Array): Uint8Array {
  if (stored[0] !== JSON_INPUT_BYTE) return stored;
  return serialize(decode<{ input: unknown }>(Buffer.from(stored.buffer, stored.byteOffset, stored.byteLength).toString('utf8')).input);
}

/**
 * Reads packInput's bytes back (tests, tools) as a pool thread does (shared-input.ts readShared).
 * @throws StoredInputError naming the version mismatch when V8 cannot read them.
 */
export function unpackInput<T>(bytes: Uint8Array): T {
  return readShared<T>({ shared: inputBytes(bytes) });
}

/** Worker's reason when it stops a chunk of a cancelled flow (the API records 'cancelled'). */
export const CANCELLED_REASON = 'cancelled';

/**
 * JSON with ±Infinity and NaN kept (plain JSON turns them into null): bit-for-bit results need
 * every double back as it was. JSON.stringify prints the shortest decimal that reads back to the
 * same double (ECMA-262 Number::toString), so finite numbers round-trip exactly.
 */
export function encode(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? { $num: String(v) } : v));
}

export function decode<T>(text: string): T {
  // Nothing non-finite was written (encode marks each as {"$num": …}): plain JSON.parse, without a
  // reviver call per value (about 3× faster on a 4 MB summary input; the same value).
  if (!text.includes('"$num"')) return JSON.parse(text) as T;
  return JSON.parse(text, (_k, v: unknown) => {
    if (v && typeof v === 'object' && !Array.isArray(v)) {
      const o = v as Record<string, unknown>;
      if (typeof o.$num === 'string' && Object.keys(o).length === 1) return Number(o.$num);
    }
    return v;
  }) as T;
}

/** ioredis options from a redis:// URL, for BullMQ. Workers wait for Redis forever; the API's commands fail after one retry. */
export function connectionFor(url: string, role: 'worker' | 'api'): { url: string; maxRetriesPerRequest: number | null; enableOfflineQueue: boolean; retryStrategy: (n: number) => number } {
  return {
    url,
    maxRetriesPerRequest: role === 'worker' ? null : 1,
    enableOfflineQueue: true,
    retryStrategy: (n: number) => Math.min(2000, 100 * n),
  };
}

/** Waits `ms`, or less when `signal` aborts (resolves either way, never rejects: a poll loop's pause). */
export function sleep(ms: number, signal: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    if (signal.aborted) return resolve();
    const t = setTimeout(done, ms);
    function done() {
      clearTimeout(t);
      signal.removeEventListener('abort', done);
      resolve();
    }
    signal.addEventListener('abort', done, { once: true });
  });
}
