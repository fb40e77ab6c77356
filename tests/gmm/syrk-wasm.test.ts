/**
 * The committed WebAssembly bytes (lib/gmm/syrk-wasm-bytes.ts) are the WebAssembly text source
 * lib/gmm/syrk.wat assembled by an outside, maintained assembler: the `wabt` npm package (the
 * WebAssembly Binary Toolkit). The kernel's numbers are checked in hac-kernel.test.ts.
 */
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { SYRK_WASM } from '../../lib/gmm/syrk-wasm-bytes';
import { assembleWat, bytesModuleText, SYRK_BYTES_FILE, SYRK_WAT_FILE } from '../../scripts/wasm-assemble';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

describe('WebAssembly kernel source', () => {
  it('the committed bytes equal lib/gmm/syrk.wat assembled with wabt (npm run build:wasm)', async () => {
    const bytes = await assembleWat(readFileSync(join(root, SYRK_WAT_FILE), 'utf8'));
    expect(bytes.length).toBeGreaterThan(100);
    expect(Array.from(bytes)).toEqual(SYRK_WASM);
    // and the generated file is exactly what the build script writes
    expect(readFileSync(join(root, SYRK_BYTES_FILE), 'utf8')).toBe(bytesModuleText(bytes));
  });

  it('the bytes are a valid module exporting syrk(q, M, p, s, ch) with one imported memory', () => {
    const mod = new WebAssembly.Module(Uint8Array.from(SYRK_WASM));
    expect(WebAssembly.Module.exports(mod)).toEqual([{ name: 'syrk', kind: 'function' }]);
    expect(WebAssembly.Module.imports(mod)).toEqual([{ module: 'env', name: 'memory', kind: 'memory' }]);
  });
});
