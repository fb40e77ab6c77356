/** A bench's typed lib/gmm result that must have succeeded (a failure stops the bench with its message). */
import type { GmmResult } from '../lib/gmm/index';

export function okOf<T extends object>(r: GmmResult<T>): T & { readonly ok: true } {
  if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
  return r;
}
