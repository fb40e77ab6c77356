import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { randomBytes } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { loadConfig, type Config } from './config';
import { openDb, type Db } from './db/client';
import { createMailer, type Mailer } from './services/mailer';
import { seedDemo } from './seed/index';
import { createApp, type KeelsonApp } from './app';
import { createJobPool } from './jobs/pool';
import { markInterruptedJobs } from './jobs/runner';

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** Session secret: from the environment, else one kept beside the database so sessions survive restarts. */
function sessionSecret(config: Config): string {
  if (config.SESSION_SECRET) return config.SESSION_SECRET;
  if (config.KEELSON_DB === ':memory:') return randomBytes(32).toString('hex');
  const file = join(dirname(resolve(config.KEELSON_DB)), 'session-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dirname(file), { recursive: true });
  const s = randomBytes(32).toString('hex');
  writeFileSync(file, s, { mode: 0o600 });
  return s;
}

/** Upload folders are `keelson-uploads-<pid>` in the temp folder (UPLOAD_TMP in server/routes/libraries.ts). */
export const UPLOAD_FOLDER_PATTERN = /^keelson-uploads-(\d+)$/;

function processIsAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    // EPERM: it exists but belongs to someone else.
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes the upload temp folders of server processes that are gone (a crash leaves half-received
 * files behind). This process's own folder is emptied too: at boot nothing of ours can be in it yet,
 * so what is there was left by an earlier process with the same pid (a container restart).
 * Returns the folders removed.
 */
export function removeStaleUploadFolders(root = tmpdir(), ownPid = process.pid): string[] {
  let names: string[];
  try {
    names = readdirSync(root);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names) {
    const m = UPLOAD_FOLDER_PATTERN.exec(name);
    if (!m) continue;
    const pid = Number(m[1]);
    if (pid !== ownPid && processIsAlive(pid)) continue;
    const dir = join(root, name);
    try {
      rmSync(dir, { recursive: true, force: true });
      removed.push(dir);
    } catch (e) {
      console.warn(`Keelson could not remove the stale upload folder ${dir}: ${(e as Error).message}`);
    }
  }
  return removed;
}

/** Opens and migrates the database, seeds an empty one, starts the mailer and builds the app. */
export async function boot(env: NodeJS.ProcessEnv = process.env): Promise<{ app: KeelsonApp; db: Db; mailer: Mailer; config: Config }> {
  const config = loadConfig(env);
  const stale = removeStaleUploadFolders();
  if (stale.length > 0) console.log(`Keelson removed ${stale.length} upload folder(s) left by stopped server processes`);
  const db = openDb(config.KEELSON_DB === ':memory:' ? ':memory:' : resolve(ROOT, config.KEELSON_DB));
  if (config.KEELSON_SEED === 'demo') await seedDemo(db);
  const mailer = await createMailer({ smtpUrl: config.SMTP_URL, from: config.MAIL_FROM });
  // Deep-check jobs that were running when the last process stopped can only be restarted
  // (embedded pool); in queue mode their flows go on in Redis and the runner re-attaches below.
  if (!config.KEELSON_REDIS_URL) {
    const interrupted = markInterruptedJobs(db);
    if (interrupted > 0) console.log(`Keelson marked ${interrupted} deep-check job(s) interrupted by the last shutdown`);
  }
  const app = createApp({
    db,
    mailer,
    sessionSecret: sessionSecret(config),
    webDist: join(ROOT, 'dist'),
    publicUrl: config.PUBLIC_URL,
    uploadLimit: config.UPLOAD_LIMIT_MB * 1024 * 1024,
    secureCookies: config.COOKIE_SECURE,
    trustProxy: config.TRUST_PROXY,
    jobPool: config.KEELSON_REDIS_URL ? undefined : createJobPool(),
    redisUrl: config.KEELSON_REDIS_URL,
    heavyRunCost: config.KEELSON_HEAVY_RUN_COST,
  });
  // Heavy runs left queued or running by the last process are estimated again (both modes).
  const relaunched = app.runEstimator.relaunch();
  if (relaunched > 0) console.log(`Keelson started ${relaunched} heavy run(s) left queued or running by the last shutdown again`);
  if (config.KEELSON_REDIS_URL) {
    const followed = app.jobRunner.reattach();
    console.log(`Keelson queue mode: deep checks go to the workers on ${app.jobRunner.queue?.where}` + (followed > 0 ? `; following ${followed} job(s) in flight` : ''));
  }
  return { app, db, mailer, config };
}
