/**
 * The fixture mechanism itself (helpers.ts pythonFixture): a committed fixture is only used for the
 * exact input it was computed from, a missing or stale one fails at once with the command that
 * regenerates it, and fixtures:check reports every moved value. Every committed fixture records
 * its generator script and the Debian package versions that produced it.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { FIXTURE_DIR, FIXTURE_MOVE_TOL, fixtureMode, movedValues, pythonFixture, REFERENCE_SCRIPT } from './helpers';

describe('committed reference fixtures', () => {
  const files = readdirSync(FIXTURE_DIR).filter((f) => f.endsWith('.json'));

  it('every fixture names its generator, the package versions and the SHA-256 of its input', () => {
    expect(files.length).toBeGreaterThanOrEqual(10);
    for (const f of files) {
      const fx = JSON.parse(readFileSync(join(FIXTURE_DIR, f), 'utf8'));
      expect(fx.fixture, f).toBe(f.replace(/\.json$/, ''));
      expect(fx.generatedBy, f).toMatch(/tests\/reference\/\w+\.py/);
      for (const pkg of ['python', 'numpy', 'scipy', 'statsmodels']) expect(fx.versions[pkg], `${f} ${pkg}`).toMatch(/^\d+\.\d+/);
      expect(fx.inputSha256, f).toMatch(/^[0-9a-f]{64}$/);
      expect(fx.output, f).toBeDefined();
    }
  });

  it('a fixture used with other inputs, or a missing one, fails at once naming npm run fixtures:write', () => {
    // (under fixtures:write / fixtures:check the references are rerun instead of read)
    if (fixtureMode !== 'read') return expect(['write', 'check']).toContain(fixtureMode);
    expect(() => pythonFixture('longley-lstsq', REFERENCE_SCRIPT, { task: 'lstsq', data: [[1, 2]] })).toThrow(/computed from other inputs.*npm run fixtures:write/s);
    expect(() => pythonFixture('no-such-fixture', REFERENCE_SCRIPT, {})).toThrow(/Missing fixture.*apt-get install -y python3-numpy/s);
  });

  it('movedValues reports structure changes and numbers beyond the tolerance, not rounding below it', () => {
    const old = { a: [1, 2, 3], b: { c: 0.5, d: 'x' }, e: null };
    expect(movedValues({ a: [1, 2, 3 * (1 + FIXTURE_MOVE_TOL / 2)], b: { c: 0.5, d: 'x' }, e: null }, old, FIXTURE_MOVE_TOL)).toEqual([]);
    const moved = movedValues({ a: [1, 2, 3.0001], b: { c: 0.5, d: 'y' }, e: 1 }, old, FIXTURE_MOVE_TOL);
    expect(moved).toHaveLength(3);
    expect(moved[0]).toMatch(/^a\[2\]: 3 → 3.0001/);
    expect(movedValues({ a: [1, 2] }, { a: [1, 2, 3] }, FIXTURE_MOVE_TOL)).toEqual(['a: length 3 → 2']);
  });
});
