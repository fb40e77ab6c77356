/**
 * First step of `npm test`: make sure what the tests need outside npm is on this machine, so no
 * test silently disappears. `npm test` needs Debian's Chromium at /usr/bin/chromium (browser
 * tests) and Debian's redis-server (queue tests, tests/queue); it needs no Python at all: every
 * reference value from numpy/scipy/statsmodels is read from a committed fixture (tests/fixtures/*.json,
 * see pythonFixture in tests/gmm/helpers.ts). With `--fixtures` (first step of
 * `npm run fixtures:check` / `fixtures:write`, which rerun the Python references): numpy, scipy,
 * statsmodels and mpmath for /usr/bin/python3.
 *
 * When something is missing and the process runs as root with apt-get available (as on these
 * machines and in CI), it is installed with apt-get; otherwise the run stops at once with the exact
 * command to run. Set KEELSON_NO_INSTALL=1 to only check.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

interface Need {
  readonly what: string;
  readonly packages: readonly string[];
  readonly present: () => boolean;
}

const browser: Need = { what: 'Chromium at /usr/bin/chromium (browser tests)', packages: ['chromium'], present: () => existsSync('/usr/bin/chromium') };
const redis: Need = { what: 'redis-server at /usr/bin/redis-server (queue tests, tests/queue)', packages: ['redis-server'], present: () => existsSync('/usr/bin/redis-server') };
const python: Need = {
  what: 'numpy, scipy, statsmodels and mpmath for /usr/bin/python3 (the Python references behind tests/fixtures)',
  packages: ['python3-numpy', 'python3-scipy', 'python3-statsmodels', 'python3-mpmath'],
  present: () =>
    existsSync('/usr/bin/python3') &&
    spawnSync('/usr/bin/python3', ['-c', 'import numpy, scipy, statsmodels, mpmath'], { stdio: 'ignore' }).status === 0,
};
const needs: readonly Need[] = process.argv.includes('--fixtures') ? [python] : [browser, redis];

const missing = needs.filter((n) => !n.present());
if (missing.length === 0) process.exit(0);

const packages = missing.flatMap((n) => n.packages);
const command = `apt-get update && apt-get install -y ${packages.join(' ')}`;
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
const hasApt = existsSync('/usr/bin/apt-get');
const who = process.argv.includes('--fixtures') ? 'fixtures' : 'npm test';
for (const n of missing) console.error(`${who}: missing ${n.what}.`);

if (!isRoot || !hasApt || process.env.KEELSON_NO_INSTALL === '1') {
  console.error(`${who}: install it and run again:\n  sudo ${command}`);
  process.exit(1);
}

console.error(`${who}: installing ${packages.join(', ')} with apt-get …`);
const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
const update = spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
const install = update.status === 0 ? spawnSync('apt-get', ['install', '-y', '-qq', ...packages], { stdio: 'inherit', env }) : update;
const still = missing.filter((n) => !n.present());
if (install.status !== 0 || still.length > 0) {
  console.error(`${who}: the install failed; run it by hand and try again:\n  ${command}`);
  process.exit(1);
}
console.error(`${who}: installed.`);
