// Worker-thread entry for the deep-check pool. Worker threads start with no TypeScript loader,
// so register tsx's ESM hooks here (tsx/esm/api `register`) before importing the TS task module.
// This works the same when the server runs under `tsx`, `node --import tsx` or vitest.
import { readlinkSync } from 'node:fs';
import { setPriority } from 'node:os';
import { register } from 'tsx/esm/api';

// Lower this thread's scheduling priority by KEELSON_THREAD_NICE (set by server/jobs/pool.ts: 10 in
// the API's embedded pool, so that when cores are scarce the API's own thread wins the CPU and keeps
// answering while checks run; 0 in a queue worker, which has no API to protect and measured
// 20–30 % slower draws at nice 10). Linux treats a thread id as a process id for setpriority, so
// only this worker thread is affected; elsewhere this is skipped.
const nice = Number(process.env.KEELSON_THREAD_NICE ?? 0);
try {
  const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
  if (nice > 0 && Number.isInteger(tid) && tid > 0) setPriority(tid, nice);
} catch {
  /* not Linux, or not permitted: run at normal priority */
}

register();
const mod = await import('./tasks.ts');

export default mod.default;
