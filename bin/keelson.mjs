#!/usr/bin/env -S node --single-threaded-gc
// --single-threaded-gc: each thread collects its own garbage, with no V8 helper threads. A `keelson
// worker` keeps every core busy with pool threads; parallel-GC helpers then compete with the other
// threads for the same cores (two workers on two cores: 49–53 ms a bootstrap draw at T = 12,000,
// N = 100 with helpers, 43–45 ms without, against 44–45 ms for one worker alone). The other
// commands run on one thread (HTTP calls, or one local `keelson estimate`); they only give up the
// helpers' parallel collection. V8 reads the flag at start-up only (setting it later crashed the
// collector when tried), hence the shebang.
// Launcher for `npx keelson …`: loads the TypeScript entry through tsx's API in this process.
import { tsImport } from 'tsx/esm/api';

try {
  const cli = await tsImport('./keelson-cli.ts', import.meta.url);
  process.exitCode = await cli.main(process.argv.slice(2));
} catch (err) {
  process.stderr.write(`keelson: ${err instanceof Error ? err.message : String(err)}\n`);
  process.exitCode = 1;
}
