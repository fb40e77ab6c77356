/**
 * `npm start`: builds the web export when it is missing or older than the client sources,
 * then starts the server (which migrates, seeds an empty database and serves app + API on one port).
 */
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { spawnSync } from 'node:child_process';
import { ROOT } from '../server/boot';

const CLIENT_SOURCES = ['app', 'components', 'hooks', 'api', 'shared', 'assets', 'app.json', 'package.json'];

function newest(path: string): number {
  if (!existsSync(path)) return 0;
  const st = statSync(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const e of readdirSync(path)) m = Math.max(m, newest(join(path, e)));
  return m;
}

export function webBuildIsStale(): boolean {
  const index = join(ROOT, 'dist', 'index.html');
  if (!existsSync(index)) return true;
  const built = statSync(index).mtimeMs;
  return CLIENT_SOURCES.some((p) => newest(join(ROOT, p)) > built);
}

if (webBuildIsStale()) {
  console.log('Building the web app (expo export)…');
  const r = spawnSync('npx', ['expo', 'export', '--platform', 'web', '--output-dir', 'dist'], {
    cwd: ROOT,
    stdio: 'inherit',
    env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1' },
  });
  if (r.status !== 0) {
    console.error('The web build failed; see the messages above.');
    process.exit(r.status ?? 1);
  }
}
await import('../server/index');
