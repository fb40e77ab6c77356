/**
 * KEELSON_REDIS_URL: unset (or empty) keeps the embedded pool; a redis:// or rediss:// URL turns
 * queue mode on; anything else stops start-up with the setting's name.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig as load } from '../../server/config';

const loadConfig = (env: Record<string, string>) => load(env as NodeJS.ProcessEnv);

describe('KEELSON_REDIS_URL', () => {
  it('is absent by default and when empty: the embedded pool stays the default', () => {
    expect(loadConfig({}).KEELSON_REDIS_URL).toBeUndefined();
    expect(loadConfig({ KEELSON_REDIS_URL: '  ' }).KEELSON_REDIS_URL).toBeUndefined();
  });
  it('accepts redis:// and rediss:// URLs', () => {
    expect(loadConfig({ KEELSON_REDIS_URL: 'redis://127.0.0.1:6379' }).KEELSON_REDIS_URL).toBe('redis://127.0.0.1:6379');
    expect(loadConfig({ KEELSON_REDIS_URL: 'rediss://user:pw@queue.example:6380/2' }).KEELSON_REDIS_URL).toBe('rediss://user:pw@queue.example:6380/2');
  });
  it('refuses other schemes and non-URLs, naming the setting', () => {
    expect(() => loadConfig({ KEELSON_REDIS_URL: 'http://127.0.0.1:6379' })).toThrow(/KEELSON_REDIS_URL: use a redis:\/\/ or rediss:\/\/ URL/);
    expect(() => loadConfig({ KEELSON_REDIS_URL: 'localhost:6379' })).toThrow(/KEELSON_REDIS_URL/);
  });
});
