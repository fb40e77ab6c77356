/**
 * Upload parsing for the libraries service: the shared return-CSV reader (shared/return-csv.ts,
 * also used by the command line) and the blob packing of stored values.
 */
export * from '../../shared/return-csv';

/** Column-major T×N Float64Array blob of the parsed values. */
export function packColumns(values: readonly Float64Array[], T: number): Buffer {
  const all = new Float64Array(values.length * T);
  values.forEach((v, k) => all.set(v, k * T));
  return Buffer.from(all.buffer, all.byteOffset, all.byteLength);
}

/** Copies a blob into a fresh (aligned) Float64Array. */
export function blobToFloat64(buf: Uint8Array): Float64Array {
  const out = new Float64Array(buf.byteLength / 8);
  new Uint8Array(out.buffer).set(buf);
  return out;
}
