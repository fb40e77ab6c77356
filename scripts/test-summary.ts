/**
 * Prints one closing line for the whole `npm test` run, summed over the vitest JSON reports
 * in test-results/: "Tests: N passed, N failed" (plus skipped when any).
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

const dir = join(process.cwd(), 'test-results');
let passed = 0;
let failed = 0;
let skipped = 0;
if (existsSync(dir)) {
  for (const f of readdirSync(dir).filter((n) => n.endsWith('.json'))) {
    const r = JSON.parse(readFileSync(join(dir, f), 'utf8')) as {
      numPassedTests: number;
      numFailedTests: number;
      numPendingTests?: number;
      numTodoTests?: number;
    };
    passed += r.numPassedTests;
    failed += r.numFailedTests;
    skipped += (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
  }
}
console.log(`Tests: ${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
process.exit(failed > 0 || passed === 0 ? 1 : 0);
