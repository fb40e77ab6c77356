/**
 * `npm run bench`: runs every `bench/*.bench.ts` in its own process, one after another,
 * and prints what each reports. Pass a name fragment to run only matching files.
 */
import { readdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const filter = process.argv[2] ?? '';
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts') && f.includes(filter))
  .sort();
let failed = 0;
for (const f of files) {
  console.log(`\n=== ${f}`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', '--expose-gc', join(here, f)], { stdio: 'inherit' });
  if (r.status !== 0) failed += 1;
}
if (files.length === 0) console.log('no benchmarks matched');
process.exit(failed ? 1 : 0);
