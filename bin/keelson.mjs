#!/usr/bin/env node
// Launcher for `npx keelson …`: loads the TypeScript entry through tsx's API in this process.
import { tsImport } from 'tsx/esm/api';

try {
  const cli = await tsImport('./keelson-cli.ts', import.meta.url);
  process.exitCode = await cli.main(process.argv.slice(2));
} catch (err) {
  process.stderr.write(`keelson: ${err instanceof Error ? err.message : String(err)}\n`);
  process.exitCode = 1;
}
