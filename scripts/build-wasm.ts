/**
 * `npm run build:wasm`: assemble lib/gmm/syrk.wat with the `wabt` npm package (the WebAssembly
 * Binary Toolkit compiled to JavaScript) and write the bytes to lib/gmm/syrk-wasm-bytes.ts, which
 * lib/gmm/syrk-wasm.ts instantiates (lib/gmm itself does no I/O and needs no assembler at run
 * time). `--check` only compares and exits 1 when the committed bytes differ from the source;
 * tests/gmm/syrk-wasm.test.ts makes the same comparison on every `npm test`.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { assembleWat, SYRK_BYTES_FILE, SYRK_WAT_FILE, bytesModuleText } from './wasm-assemble';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const wat = readFileSync(join(root, SYRK_WAT_FILE), 'utf8');
const bytes = await assembleWat(wat);
const text = bytesModuleText(bytes);
const target = join(root, SYRK_BYTES_FILE);
const current = readFileSync(target, 'utf8');
if (process.argv.includes('--check')) {
  if (current !== text) {
    console.error(`${SYRK_BYTES_FILE} differs from ${SYRK_WAT_FILE} assembled; run npm run build:wasm`);
    process.exit(1);
  }
  console.log(`${SYRK_BYTES_FILE}: ${bytes.length} bytes, equal to ${SYRK_WAT_FILE} assembled`);
} else {
  writeFileSync(target, text);
  console.log(`wrote ${SYRK_BYTES_FILE} (${bytes.length} bytes) from ${SYRK_WAT_FILE}`);
}
