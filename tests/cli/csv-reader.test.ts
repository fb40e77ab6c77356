/**
 * The command line reads CSVs with the same reader as uploads (shared/return-csv.ts), so it takes
 * what an upload takes: YYYYMM (and YYYYMMDD) dates and NA / N/A / NaN / null for a missing value.
 * Checked by identity: the estimate on a YYYYMM file with NA cells in columns it does not use is
 * the estimate on the plain YYYY-MM file without those columns, number for number.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadLibrary, main } from '../../bin/keelson-cli';
import { parseReturnCsv as uploadParse } from '../../server/services/csv-import';
import { mulberry32 } from '../../lib/gmm/random';

let dir = '';
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'keelson-cli-csv-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function cli(args: string[]) {
  let out = '';
  let err = '';
  const code = await main(args, { out: (s) => (out += s), err: (s) => (err += s) });
  return { code, out, err };
}

/** Invented monthly decimals: two factors, six assets; `extra` adds a column with NA-style gaps. */
function library(opts: { compactDates: boolean; extra: boolean; naIn?: string }): string {
  const rnd = mulberry32(2024);
  const z = () => (rnd() + rnd() + rnd() - 1.5) * 2;
  const other = mulberry32(7); // the extra column's own stream, so the other columns are the same either way
  const head = ['date', 'F1', 'F2', 'A1', 'A2', 'A3', 'A4', 'A5', 'A6', ...(opts.extra ? ['GAPPY'] : [])];
  const lines = [head.join(',')];
  const gaps = ['NA', 'N/A', 'NaN', 'null', '', 'na'];
  for (let t = 0; t < 120; t++) {
    const f1 = 0.006 + 0.04 * z();
    const f2 = 0.003 + 0.02 * z();
    const assets = [0.8, 0.9, 1.0, 1.1, 1.2, 1.3].map((b, i) => b * f1 + (0.2 * i - 0.5) * f2 + 0.01 * z());
    const y = 1995 + Math.floor(t / 12);
    const m = String((t % 12) + 1).padStart(2, '0');
    const cells: string[] = [opts.compactDates ? `${y}${m}` : `${y}-${m}`, ...[f1, f2, ...assets].map((v) => v.toFixed(6))];
    if (opts.naIn && t === 7) cells[head.indexOf(opts.naIn)] = 'NA';
    if (opts.extra) cells.push(t % 5 === 0 ? gaps[(t / 5) % gaps.length]! : (0.01 * (other() - 0.5)).toFixed(6));
    lines.push(cells.join(','));
  }
  return `${lines.join('\n')}\n`;
}

function write(name: string, text: string): string {
  const file = join(dir, name);
  writeFileSync(file, text);
  return file;
}

describe('keelson estimate reads CSVs like an upload does', () => {
  it('accepts YYYYMM dates and NA cells: the same ledger as the plain YYYY-MM file without the gappy column', async () => {
    const compact = write('compact.csv', library({ compactDates: true, extra: true }));
    const plain = write('plain.csv', library({ compactDates: false, extra: false }));
    const args = (f: string) => ['estimate', '--data', f, '--factors', 'F1,F2', '--assets', 'A1,A2,A3,A4,A5,A6', '--json'];
    const a = await cli(args(compact));
    const b = await cli(args(plain));
    expect(a.err).toBe('');
    expect(a.code).toBe(0);
    expect(b.code).toBe(0);
    expect(JSON.parse(a.out)).toEqual(JSON.parse(b.out));
    expect(JSON.parse(a.out)).toMatchObject({ T: 120, N: 6, K: 2 });
  });

  it('reads a file exactly as the upload reader does (dates, NA → missing, values)', () => {
    const text = library({ compactDates: true, extra: true });
    const cliLib = loadLibrary('compact.csv', text, false);
    const up = uploadParse(Buffer.from(text));
    expect(cliLib.dates).toEqual(up.dates);
    expect(cliLib.dates[0]).toBe('1995-01');
    expect(cliLib.columns).toEqual(up.columns);
    up.columns.forEach((c, k) => expect(cliLib.values.get(c)).toEqual(Array.from(up.values[k]!)));
    // Six spellings of missing, each read as NaN.
    const gappy = cliLib.values.get('GAPPY')!;
    expect([0, 5, 10, 15, 20, 25].map((t) => Number.isNaN(gappy[t]!))).toEqual([true, true, true, true, true, true]);
    expect(gappy.filter((v) => Number.isNaN(v))).toHaveLength(24);
  });

  it('accepts YYYYMMDD daily dates', () => {
    const lib = loadLibrary('d.csv', 'date,A,B\n20240102,0.01,NA\n20240103,0.02,0.01\n', false);
    expect(lib.dates).toEqual(['2024-01-02', '2024-01-03']);
    expect(Number.isNaN(lib.values.get('B')![0]!)).toBe(true);
  });

  it('refuses NA in a column the estimate uses, naming line, date and column (exit 2)', async () => {
    const f = write('na-used.csv', library({ compactDates: true, extra: false, naIn: 'A3' }));
    const r = await cli(['estimate', '--data', f, '--factors', 'F1,F2']);
    expect(r.code).toBe(2);
    expect(r.err).toBe(`keelson: ${f} line 9 (1995-08), column A3: missing value\n`);
  });
});
