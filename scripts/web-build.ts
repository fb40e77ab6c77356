/**
 * Web export helpers shared by `npm start` (scripts/start.ts) and the browser tests' global setup:
 * is dist/ older than the client sources, and build it with `expo export`.
 */
import { existsSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** Everything the web bundle is built from; a change to any makes dist/ stale. */
export const CLIENT_SOURCES = [
  'app',
  'components',
  'hooks',
  'api',
  'shared',
  'assets',
  'public',
  'app.json',
  'package.json',
  'babel.config.cjs',
  'metro.config.cjs',
];

function newest(path: string): number {
  if (!existsSync(path)) return 0;
  const st = statSync(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const e of readdirSync(path)) m = Math.max(m, newest(join(path, e)));
  return m;
}

export function webBuildIsStale(root = ROOT): boolean {
  const index = join(root, 'dist', 'index.html');
  if (!existsSync(index)) return true;
  const built = statSync(index).mtimeMs;
  return CLIENT_SOURCES.some((p) => newest(join(root, p)) > built);
}

/** Runs `expo export --platform web --output-dir dist`; returns the exit status (0 = built). */
export function buildWeb(opts: { root?: string; quiet?: boolean } = {}): number {
  const r = spawnSync('npx', ['expo', 'export', '--platform', 'web', '--output-dir', 'dist'], {
    cwd: opts.root ?? ROOT,
    stdio: opts.quiet ? 'pipe' : 'inherit',
    env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1' },
    encoding: 'utf8',
  });
  if (r.status !== 0 && opts.quiet) process.stderr.write(`${r.stdout ?? ''}\n${r.stderr ?? ''}`);
  return r.status ?? 1;
}
