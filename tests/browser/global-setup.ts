/**
 * Browser-test global setup: build the web export when stale, start the real server on a free port
 * with a fresh temporary SQLite file (demo accounts seeded), wait for /api/v1/health, and provide
 * `baseUrl` to the tests (`inject('baseUrl')`). Teardown stops the server and removes the files.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import type { TestProject } from 'vitest/node';
import { buildWeb, ROOT, webBuildIsStale } from '../../scripts/web-build';

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string;
  }
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.unref();
    s.on('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const addr = s.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      s.close(() => resolve(port));
    });
  });
}

async function waitForHealth(url: string, child: ChildProcess, log: () => string, timeoutMs = 60_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    if (child.exitCode !== null) throw new Error(`The server exited with ${child.exitCode}:\n${log()}`);
    try {
      const r = await fetch(`${url}/api/v1/health`);
      if (r.ok) return;
    } catch {
      /* not up yet */
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`The server did not answer /api/v1/health within ${timeoutMs} ms:\n${log()}`);
}

/**
 * Builds dist/ when stale, under a lock directory so two suites started together (several engineers
 * share the tree) do not run `expo export` into the same folder at once. A lock older than 5 min is stale.
 */
async function buildWebOnce(): Promise<void> {
  const lock = join(ROOT, '.tmp', 'web-build.lock');
  mkdirSync(dirname(lock), { recursive: true });
  const until = Date.now() + 10 * 60_000;
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      try {
        if (Date.now() - statSync(lock).mtimeMs > 5 * 60_000) rmSync(lock, { recursive: true, force: true });
      } catch {
        /* released meanwhile */
      }
      if (Date.now() > until) throw new Error(`Timed out waiting for ${lock}`);
      await new Promise((r) => setTimeout(r, 1000));
    }
  }
  try {
    if (webBuildIsStale()) {
      const t0 = Date.now();
      if (buildWeb({ quiet: true }) !== 0) throw new Error('expo export failed; see the output above');
      console.log(`[browser tests] web export built in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    }
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export default async function setup(project: TestProject) {
  await buildWebOnce();
  const dir = mkdtempSync(join(tmpdir(), 'keelson-browser-'));
  const port = await freePort();
  let out = '';
  const child = spawn('npx', ['tsx', 'server/index.ts'], {
    cwd: ROOT,
    env: {
      ...process.env,
      PORT: String(port),
      KEELSON_DB: join(dir, 'keelson.db'),
      KEELSON_SEED: 'demo',
      SESSION_SECRET: 'browser-tests-session-secret-0123456789',
      NODE_ENV: 'test',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
    detached: true,
  });
  child.stdout?.on('data', (d) => (out += String(d)));
  child.stderr?.on('data', (d) => (out += String(d)));
  const baseUrl = `http://127.0.0.1:${port}`;
  try {
    await waitForHealth(baseUrl, child, () => out);
  } catch (e) {
    if (child.pid) process.kill(-child.pid, 'SIGTERM');
    throw e;
  }
  project.provide('baseUrl', baseUrl);
  return async () => {
    if (child.pid && child.exitCode === null) {
      process.kill(-child.pid, 'SIGTERM');
      await new Promise((r) => child.once('exit', r));
    }
    rmSync(dir, { recursive: true, force: true });
  };
}
