/** Shared by scripts/build-wasm.ts and tests/gmm/syrk-wasm.test.ts: WAT → bytes with `wabt`, and the generated module text. */
import wabtInit from 'wabt';

export const SYRK_WAT_FILE = 'lib/gmm/syrk.wat';
export const SYRK_BYTES_FILE = 'lib/gmm/syrk-wasm-bytes.ts';

/** Assemble WebAssembly text (SIMD enabled) to the binary module, validated. */
export async function assembleWat(wat: string): Promise<Uint8Array> {
  const wabt = await wabtInit();
  const mod = wabt.parseWat('syrk.wat', wat, { simd: true });
  try {
    mod.validate();
    return Uint8Array.from(mod.toBinary({}).buffer);
  } finally {
    mod.destroy();
  }
}

/** The text of lib/gmm/syrk-wasm-bytes.ts for `bytes`. */
export function bytesModuleText(bytes: Uint8Array): string {
  const rows: string[] = [];
  for (let i = 0; i < bytes.length; i += 16)
    rows.push(`  ${Array.from(bytes.subarray(i, i + 16), (b) => `0x${b.toString(16).padStart(2, '0')}`).join(', ')},`);
  return `/**
 * The WebAssembly module of lib/gmm/syrk.wat, assembled by the \`wabt\` npm package
 * (npm run build:wasm, scripts/build-wasm.ts). Generated: do not edit; edit syrk.wat and rebuild.
 * tests/gmm/syrk-wasm.test.ts checks that these bytes equal the source assembled.
 */
export const SYRK_WASM: readonly number[] = [
${rows.join('\n')}
];
`;
}
