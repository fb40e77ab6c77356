import { mkdirSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
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

/** Opens and migrates the database, seeds an empty one, starts the mailer and builds the app. */
export async function boot(env: NodeJS.ProcessEnv = process.env): Promise<{ app: KeelsonApp; db: Db; mailer: Mailer; config: Config }> {
  const config = loadConfig(env);
  const db = openDb(config.KEELSON_DB === ':memory:' ? ':memory:' : resolve(ROOT, config.KEELSON_DB));
  if (config.KEELSON_SEED === 'demo') await seedDemo(db);
  const mailer = await createMailer({ smtpUrl: config.SMTP_URL, from: config.MAIL_FROM });
  // Deep-check jobs that were running when the last process stopped can only be restarted.
  const interrupted = markInterruptedJobs(db);
  if (interrupted > 0) console.log(`Keelson marked ${interrupted} deep-check job(s) interrupted by the last shutdown`);
  const app = createApp({
    db,
    mailer,
    sessionSecret: sessionSecret(config),
    webDist: join(ROOT, 'dist'),
    publicUrl: config.PUBLIC_URL,
    uploadLimit: config.UPLOAD_LIMIT_MB * 1024 * 1024,
    jobPool: createJobPool(),
  });
  return { app, db, mailer, config };
}
