/**
 * `keelson worker` argument checks: a caller mistake is one line on stderr and exit code 2,
 * before any connection is made; --help prints the usage.
 */
import { describe, expect, it } from 'vitest';
import { main } from '../../bin/keelson-cli';

async function cli(args: string[], env: Record<string, string | undefined> = {}) {
  let out = '';
  let err = '';
  const saved = process.env.KEELSON_REDIS_URL;
  if ('KEELSON_REDIS_URL' in env) {
    if (env.KEELSON_REDIS_URL === undefined) delete process.env.KEELSON_REDIS_URL;
    else process.env.KEELSON_REDIS_URL = env.KEELSON_REDIS_URL;
  }
  try {
    const code = await main(args, { out: (s) => (out += s), err: (s) => (err += s) });
    return { code, out, err };
  } finally {
    if (saved === undefined) delete process.env.KEELSON_REDIS_URL;
    else process.env.KEELSON_REDIS_URL = saved;
  }
}

describe('keelson worker', () => {
  it('prints its usage with --help', async () => {
    const r = await cli(['worker', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/usage: keelson worker --redis redis:\/\/host:6379 \[--concurrency N\]/);
  });
  it('refuses a missing or non-redis URL, a bad concurrency and unknown options with exit 2', async () => {
    expect(await cli(['worker'], { KEELSON_REDIS_URL: undefined })).toMatchObject({ code: 2, err: expect.stringMatching(/needs --redis/) });
    expect(await cli(['worker', '--redis', 'http://127.0.0.1:6379'])).toMatchObject({ code: 2, err: expect.stringMatching(/needs --redis/) });
    expect(await cli(['worker', '--redis', 'redis://127.0.0.1:1', '--concurrency', '0'])).toMatchObject({ code: 2, err: expect.stringMatching(/--concurrency is a whole number/) });
    expect(await cli(['worker', '--redis', 'redis://127.0.0.1:1', '--threads', '2'])).toMatchObject({ code: 2, err: expect.stringMatching(/--threads/) });
  });
});
