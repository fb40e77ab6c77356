/**
 * Generated fuzz suite: seeded random corruptions of valid library CSVs (varying size, frequency,
 * separator, line ends, BOM, units and missing cells). Every corruption is one that must be
 * refused; for each file the test asserts a 4xx status, an error message, no new row in any
 * table, and that the server still answers.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { agentAs, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { prng, uploadCsv } from './libraries-helpers';

const FILES_PER_KIND = 26;

let t: TestApp;
let me: Agent;
beforeAll(async () => {
  t = await makeTestApp();
  me = await agentAs(t.app, 'admin');
});
afterAll(() => t.close());

interface Base {
  header: string[];
  rows: string[][];
  frequency: 'monthly' | 'daily';
  sep: string;
  eol: string;
  bom: boolean;
}

function baseFile(rnd: () => number): Base {
  const T = 3 + Math.floor(rnd() * 40);
  const N = 1 + Math.floor(rnd() * 7);
  const frequency = rnd() < 0.6 ? 'monthly' : 'daily';
  const scale = rnd() < 0.5 ? 1 : 100;
  const header = ['date', ...Array.from({ length: N }, (_, k) => `S${k}_${Math.floor(rnd() * 1000)}`)];
  const start = Date.UTC(1990 + Math.floor(rnd() * 30), Math.floor(rnd() * 12), 1);
  const rows: string[][] = [];
  for (let i = 0; i < T; i++) {
    const d = new Date(start);
    if (frequency === 'monthly') d.setUTCMonth(d.getUTCMonth() + i);
    else d.setUTCDate(d.getUTCDate() + i);
    const iso = d.toISOString();
    const date = frequency === 'monthly' ? (rnd() < 0.5 ? iso.slice(0, 7) : iso.slice(0, 7).replace('-', '')) : iso.slice(0, 10);
    // the first row of each column always holds a value, so no column is all missing
    rows.push([date, ...Array.from({ length: N }, () => (i > 0 && rnd() < 0.05 ? '' : String(((rnd() - 0.45) * 0.1 * scale).toFixed(6))))]);
  }
  return { header, rows, frequency, sep: rnd() < 0.7 ? ',' : ';', eol: rnd() < 0.5 ? '\n' : '\r\n', bom: rnd() < 0.2 };
}

function render(b: Base): Buffer {
  const text = [b.header, ...b.rows].map((r) => r.join(b.sep)).join(b.eol) + b.eol;
  return Buffer.concat([b.bom ? Buffer.from([0xef, 0xbb, 0xbf]) : Buffer.alloc(0), Buffer.from(text, 'utf8')]);
}

const pick = <T,>(rnd: () => number, a: readonly T[]): T => a[Math.floor(rnd() * a.length)]!;
const NOT_NUMBERS = ['abc', '1.2.3', '--0.1', '0x1F', '1e', '+-1', 'one', '#DIV/0!', '∞', '1 000', '5%', 'TRUE', '0.1a', 'e5', '..1', 'Inf', '1e999'];
const NOT_DATES = ['2020-13', '20-01', 'yesterday', '2020/01', '', '2020-00', '1700-01', '2020-02-30', '2020-1-1-1', 'Q1 2020', '01/02/2020', '2020-W05'];

/** Each corruption takes a valid file and must make it invalid. */
const CORRUPTIONS: Record<string, (b: Base, rnd: () => number) => Buffer> = {
  nonNumericCell(b, rnd) {
    const r = Math.floor(rnd() * b.rows.length);
    const c = 1 + Math.floor(rnd() * (b.header.length - 1));
    b.rows[r]![c] = pick(rnd, NOT_NUMBERS);
    return render(b);
  },
  badDate(b, rnd) {
    b.rows[Math.floor(rnd() * b.rows.length)]![0] = pick(rnd, NOT_DATES);
    return render(b);
  },
  duplicateDate(b, rnd) {
    if (b.rows.length < 2) b.rows.push([...b.rows[0]!]);
    const i = Math.floor(rnd() * b.rows.length);
    let j = Math.floor(rnd() * b.rows.length);
    if (j === i) j = (i + 1) % b.rows.length;
    b.rows[j]![0] = b.rows[i]![0]!;
    return render(b);
  },
  raggedRow(b, rnd) {
    const r = b.rows[Math.floor(rnd() * b.rows.length)]!;
    if (rnd() < 0.5 && r.length > 1) r.pop();
    else r.push('0.01');
    return render(b);
  },
  duplicateHeader(b, rnd) {
    if (b.header.length < 3) {
      b.header.push(b.header[1]!.toLowerCase());
      b.rows.forEach((r) => r.push('0.01'));
    } else b.header[2] = rnd() < 0.5 ? b.header[1]! : b.header[1]!.toUpperCase();
    return render(b);
  },
  noDateColumn(b, rnd) {
    b.header[0] = pick(rnd, ['when', 'period', 'Datum', 'dt', '', 'dates']);
    return render(b);
  },
  mixedFrequency(b, rnd) {
    const r = b.rows[Math.floor(rnd() * b.rows.length)]!;
    r[0] = b.frequency === 'monthly' ? `${2031 + Math.floor(rnd() * 5)}-0${1 + Math.floor(rnd() * 9)}-1${Math.floor(rnd() * 9)}` : `${2031 + Math.floor(rnd() * 5)}-0${1 + Math.floor(rnd() * 9)}`;
    return render(b);
  },
  headerOnlyOrEmpty(b, rnd) {
    const k = rnd();
    if (k < 0.4) b.rows = [];
    else if (k < 0.7) return Buffer.from(rnd() < 0.5 ? '' : b.eol.repeat(3));
    else b.header = ['date'];
    if (b.header.length === 1) b.rows = b.rows.map((r) => [r[0]!]);
    return render(b);
  },
  emptyColumn(b, rnd) {
    const c = 1 + Math.floor(rnd() * (b.header.length - 1));
    b.rows.forEach((r) => (r[c] = pick(rnd, ['', 'NA', 'NaN', 'n/a'])));
    return render(b);
  },
  binaryOrEncoding(b, rnd) {
    const good = render(b);
    const at = Math.floor(rnd() * good.length);
    const bad = rnd() < 0.5 ? Buffer.from([0]) : Buffer.from([0xff, 0xfe, 0xc3]);
    return Buffer.concat([good.subarray(0, at), bad, good.subarray(at)]);
  },
  emptyHeaderName(b, rnd) {
    b.header[1 + Math.floor(rnd() * (b.header.length - 1))] = rnd() < 0.5 ? '' : '  ';
    return render(b);
  },
  unclosedQuote(b, rnd) {
    const r = b.rows[Math.floor(rnd() * b.rows.length)]!;
    const c = 1 + Math.floor(rnd() * (r.length - 1));
    r[c] = `"${r[c]}`;
    return render(b);
  },
  tooWide(b) {
    b.header = ['date', ...Array.from({ length: 2001 }, (_, i) => `C${i}`)];
    b.rows = b.rows.slice(0, 2).map((r) => [r[0]!, ...Array.from({ length: 2001 }, () => '0.01')]);
    return render(b);
  },
};

describe('CSV fuzz: seeded corruptions are all refused without side effects', () => {
  it(`refuses ${Object.keys(CORRUPTIONS).length * FILES_PER_KIND} corrupted files`, async () => {
    const kinds = Object.keys(CORRUPTIONS);
    const statuses = new Map<number, number>();
    let n = 0;
    for (let i = 0; i < FILES_PER_KIND; i++) {
      for (const kind of kinds) {
        const seed = 1000 + i * 97 + kinds.indexOf(kind);
        const rnd = prng(seed);
        const file = CORRUPTIONS[kind]!(baseFile(rnd), rnd);
        const before = tableCounts(t.db);
        const r = await uploadCsv(me, file, `fuzz-${seed}.csv`);
        const label = `${kind} seed ${seed}: ${r.status} ${JSON.stringify(r.body).slice(0, 200)}`;
        expect(r.status, label).toBeGreaterThanOrEqual(400);
        expect(r.status, label).toBeLessThan(500);
        expect(typeof r.body?.error?.message, label).toBe('string');
        expect(r.body.error.message.length, label).toBeGreaterThan(10);
        expect(tableCounts(t.db), label).toEqual(before);
        statuses.set(r.status, (statuses.get(r.status) ?? 0) + 1);
        n++;
        if (n % 25 === 0) await request(t.app).get('/api/v1/health').expect(200);
      }
    }
    await request(t.app).get('/api/v1/health').expect(200);
    expect(n).toBeGreaterThanOrEqual(300);
    expect([...statuses.keys()].every((s) => s === 400 || s === 422)).toBe(true);
  });

  it('accepts the uncorrupted base files (the corruptions, not the generator, cause the refusals)', async () => {
    for (let i = 0; i < 20; i++) {
      const rnd = prng(5000 + i);
      const r = await uploadCsv(me, render(baseFile(rnd)));
      expect(r.status, JSON.stringify(r.body).slice(0, 300)).toBe(201);
    }
  });
});
