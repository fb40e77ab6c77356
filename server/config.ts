import { z } from 'zod';

const booleanText = z
  .enum(['true', 'false', '1', '0', 'yes', 'no'], { message: 'use true or false' })
  .transform((v) => v === 'true' || v === '1' || v === 'yes');

/**
 * Express `trust proxy`: `false` (believe no X-Forwarded-* header), `true` (any — only behind a proxy
 * that strips what clients send), a hop count such as `1`, or comma-separated addresses/subnets or
 * the names `loopback`, `linklocal`, `uniquelocal`.
 */
const trustProxy = z
  .string()
  .trim()
  .min(1)
  .transform((v): boolean | number | string => (v === 'true' ? true : v === 'false' ? false : /^\d+$/.test(v) ? Number(v) : v));

/** Environment settings, parsed once at start-up. */
export const configSchema = z.object({
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  KEELSON_DB: z.string().min(1).default('data/keelson.db'),
  SESSION_SECRET: z.string().min(16).optional(),
  UPLOAD_LIMIT_MB: z.coerce.number().positive().max(1024).default(50),
  SMTP_URL: z.string().url().optional(),
  MAIL_FROM: z.string().default('Keelson <no-reply@keelson.test>'),
  PUBLIC_URL: z.string().url().optional(),
  KEELSON_SEED: z.enum(['demo', 'none']).default('demo'),
  /** Mark the session cookie `Secure` (serve over HTTPS, directly or behind a proxy named in TRUST_PROXY). */
  COOKIE_SECURE: booleanText.default(false),
  TRUST_PROXY: trustProxy.default('loopback'),
  /**
   * Runs whose cost T·N²·K (test assets N, factors K, periods T) is above this are answered 202
   * `queued` and estimated by the worker pool or the queue; smaller runs are estimated in the
   * request (201). The default, 2·10⁷, is ten times the largest demo run.
   */
  KEELSON_HEAVY_RUN_COST: z.coerce.number().positive().default(20_000_000),
  /**
   * Queue mode: deep checks (and heavy runs) go to BullMQ workers over this Redis
   * (`redis://[user:password@]host:port[/db]` or `rediss://…`). Unset: the embedded worker-thread
   * pool inside the API process, as a newcomer gets it.
   */
  KEELSON_REDIS_URL: z.preprocess(
    (v) => (typeof v === 'string' && v.trim() === '' ? undefined : v),
    z
      .string()
      .trim()
      .url()
      .refine((v) => /^rediss?:\/\//.test(v), { message: 'use a redis:// or rediss:// URL' })
      .optional(),
  ),
});
export type Config = z.infer<typeof configSchema>;

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const parsed = configSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
    throw new Error(`Keelson configuration is invalid:\n  ${lines.join('\n  ')}`);
  }
  return parsed.data;
}
