/**
 * Bad CSV uploads: each is refused with a clear message naming row and column (where there is
 * one), nothing is stored, and the server keeps answering. Also the accepted variants
 * (BOM, CRLF, semicolons, tabs, YYYYMM, NA cells).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { agentAs, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { uploadCsv } from './libraries-helpers';
import { uploadResponseSchema } from '../../shared/libraries';
import { readdirSync } from 'node:fs';
import { UPLOAD_TMP } from '../../server/routes/libraries';

let t: TestApp;
let me: Agent;
beforeAll(async () => {
  t = await makeTestApp({ uploadLimit: 64 * 1024 });
  me = await agentAs(t.app, 'researcher');
});
afterAll(() => t.close());

interface Issue {
  row?: number;
  column?: string;
  message: string;
}

async function refused(body: string | Buffer, status: number, pattern: RegExp, where?: { row?: number; column?: string }) {
  const before = tableCounts(t.db);
  const r = await uploadCsv(me, body);
  expect(r.status, JSON.stringify(r.body)).toBe(status);
  const e = expectEnvelope(r.body);
  expect(e.message).toMatch(pattern);
  expect(e.message).toMatch(/Nothing was saved|larger than/);
  const issues = (r.body.error.issues ?? []) as Issue[];
  if (where) {
    expect(issues.length).toBeGreaterThan(0);
    if (where.row !== undefined) expect(issues[0]!.row).toBe(where.row);
    if (where.column !== undefined) expect(issues[0]!.column).toBe(where.column);
  }
  expect(tableCounts(t.db)).toEqual(before);
  await request(t.app).get('/api/v1/health').expect(200);
  return { message: e.message, issues };
}

describe('refused uploads', () => {
  it('not a CSV: binary data, a zipped workbook, non-UTF-8 text', async () => {
    await refused(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]), 400, /not a text CSV/);
    await refused(Buffer.concat([Buffer.from('PK\u0003\u0004'), Buffer.alloc(40, 1)]), 400, /workbook/);
    await refused(Buffer.from([0x64, 0x61, 0x74, 0x65, 0x2c, 0xe9, 0xff, 0x0a]), 400, /UTF-8/);
  });

  it('empty file and whitespace-only file', async () => {
    await refused('', 400, /empty/);
    await refused('\n\n  \r\n', 400, /empty/);
  });

  it('no date column, and a file with no header row', async () => {
    await refused('when,A\n2020-01,0.1\n', 422, /No column named date/, { row: 1 });
    await refused('2020-01,0.1\n2020-02,0.2\n', 422, /looks like data, not a header/, { row: 1 });
  });

  it('header only, no data rows', async () => {
    await refused('date,A,B\n', 422, /no data rows/);
  });

  it('date column but no series columns', async () => {
    await refused('date\n2020-01\n2020-02\n', 422, /no series columns/);
  });

  it('duplicate dates, naming both rows', async () => {
    const r = await refused('date,A\n2020-01,0.1\n2020-02,0.2\n2020-02,0.3\n', 422, /2020-02 already appears in row 3/, { row: 4, column: 'date' });
    expect(r.message).toMatch(/Row 4/);
  });

  it('duplicate dates written two ways (2020-02 and 202002)', async () => {
    await refused('date,A\n2020-01,0.1\n2020-02,0.2\n202002,0.3\n', 422, /already appears/, { row: 4 });
  });

  it('unparseable dates: text, month 13, 31 February', async () => {
    await refused('date,A\n2020-01,0.1\nlast week,0.2\n', 422, /Row 3, column date: "last week" is not a date/, { row: 3, column: 'date' });
    await refused('date,A\n2020-01,0.1\n2020-13,0.2\n', 422, /"2020-13" is not a date/, { row: 3 });
    await refused('date,A\n2020-02-28,0.1\n2020-02-31,0.2\n', 422, /"2020-02-31" is not a date/, { row: 3 });
  });

  it('mixed frequencies', async () => {
    await refused('date,A\n2020-01,0.1\n2020-02-03,0.2\n', 422, /Row 3.*daily date 2020-02-03 among monthly dates \(row 2 set the frequency\)/, { row: 3, column: 'date' });
  });

  it('non-numeric cells, with hints for decimal commas and % signs', async () => {
    await refused('date,A,B\n2020-01,0.1,0.2\n2020-02,0.1,abc\n', 422, /Row 3, column B: "abc" is not a number/, { row: 3, column: 'B' });
    await refused('date;A;B\n2020-01;0,1;0,2\n', 422, /decimal mark/, { row: 2, column: 'A' });
    await refused('date,A\n2020-01,5%\n', 422, /% sign/, { row: 2, column: 'A' });
    await refused('date,A\n2020-01,Infinity\n', 422, /not a number/, { row: 2, column: 'A' });
    await refused('date,A\n2020-01,1e999\n', 422, /too large/, { row: 2, column: 'A' });
  });

  it('a ragged row', async () => {
    await refused('date,A,B\n2020-01,0.1,0.2\n2020-02,0.1\n2020-03,0.1,0.2\n', 422, /Row 3 has 2 fields; the header has 3/, { row: 3 });
    await refused('date,A,B\n2020-01,0.1,0.2,0.3\n', 422, /Row 2 has 4 fields/, { row: 2 });
  });

  it('a header with duplicate names (case-insensitive) and an empty name', async () => {
    await refused('date,A,B,a\n2020-01,0.1,0.2,0.3\n', 422, /"a" appears twice \(columns 2 and 4\)/, { row: 1, column: 'a' });
    await refused('date,A,,B\n2020-01,0.1,0.2,0.3\n', 422, /column 3: the header cell is empty/, { row: 1, column: '#3' });
  });

  it('a column with no values at all', async () => {
    await refused('date,A,B\n2020-01,0.1,\n2020-02,0.2,NA\n', 422, /Column B has no values/, { column: 'B' });
  });

  it('an unclosed quote', async () => {
    await refused('date,A\n2020-01,"0.1\n2020-02,0.2\n', 422, /Row \d+: .*[Qq]uote/);
  });

  it('a file over the limit: 413, nothing stored, temp file removed', async () => {
    const big = `date,A\n${'2020-01,0.1\n'.repeat(8000)}`; // ~96 KB over a 64 KB limit
    const before = new Set(readdirSync(UPLOAD_TMP));
    const r = await refused(big, 413, /larger than the upload limit of 0\.1 MB/);
    expect(r.issues).toEqual([]);
    await refused('date,A\n2020-01,x\n', 422, /not a number/);
    await new Promise((res) => setTimeout(res, 200));
    // The folder is this process's own; none of the files these requests wrote may remain.
    const left = readdirSync(UPLOAD_TMP).filter((f) => !before.has(f));
    expect(left).toEqual([]);
  });

  it('a million-column header is refused fast with the column cap', async () => {
    const header = `date,${Array.from({ length: 1_000_000 }, (_, i) => `S${i}`).join(',')}`;
    const small = await makeTestApp({ uploadLimit: 20 * 1024 * 1024 });
    try {
      const agent = await agentAs(small.app, 'researcher');
      const before = tableCounts(small.db);
      const started = Date.now();
      const r = await uploadCsv(agent, `${header}\n2020-01,${'0.1,'.repeat(10)}\n`);
      expect(r.status).toBe(422);
      expect(expectEnvelope(r.body, 'unprocessable').message).toMatch(/1,000,001 columns; a library holds at most 2,000 series/);
      expect(r.body.error.issues[0].row).toBe(1);
      expect(tableCounts(small.db)).toEqual(before);
      expect(Date.now() - started).toBeLessThan(10_000); // generous: "fast" is measured in bench, this only guards a hang
    } finally {
      await small.close();
    }
  });

  it('no file field, a wrong field name, a JSON body', async () => {
    const before = tableCounts(t.db);
    const a = await me.post('/api/v1/libraries/uploads').set('x-csrf-token', me.csrf).send({ csv: 'date,A' });
    expect(a.status).toBe(400);
    expect(expectEnvelope(a.body, 'bad_request').message).toMatch(/field named file/);
    const b = await me.post('/api/v1/libraries/uploads').set('x-csrf-token', me.csrf).attach('data', Buffer.from('date,A\n2020-01,1\n'), 'x.csv');
    expect(b.status).toBe(400);
    expect(expectEnvelope(b.body, 'bad_request').message).toMatch(/field named file/);
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('lists many problems at once, each with row and column', async () => {
    const r = await refused('date,A,B\n2020-01,x,0.1\n2020-02,0.1,y\nnope,0.1,0.2\n', 422, /Row 2, column A.*and 2 more problems/);
    expect(r.issues.map((i) => [i.row, i.column])).toEqual([
      [2, 'A'],
      [3, 'B'],
      [4, 'date'],
    ]);
  });
});

describe('accepted variants', () => {
  async function accepted(body: string | Buffer) {
    const r = await uploadCsv(me, body);
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    return uploadResponseSchema.parse(r.body).upload;
  }

  it('a byte-order mark, CRLF line ends, semicolons, tabs and quoted names give the same table', async () => {
    const plain = await accepted('date,A,B\n2020-01,0.1,0.2\n2020-02,0.3,0.4\n');
    const bom = await accepted(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from('date,A,B\r\n2020-01,0.1,0.2\r\n2020-02,0.3,0.4\r\n')]));
    const semi = await accepted('date;A;B\n2020-01;0.1;0.2\n2020-02;0.3;0.4\n');
    const tab = await accepted('date\tA\tB\n2020-01\t0.1\t0.2\n2020-02\t0.3\t0.4\n');
    const quoted = await accepted('"date","A","B"\n"2020-01","0.1","0.2"\n"2020-02","0.3","0.4"\n');
    for (const u of [bom, semi, tab, quoted]) {
      expect(u.columns).toEqual(plain.columns);
      expect(u.rows).toBe(2);
      expect(u.series.map((s) => s.stats)).toEqual(plain.series.map((s) => s.stats));
    }
  });

  it('YYYYMM and YYYYMMDD dates, Date in any case, blank lines, NA / N/A / NaN / null as missing', async () => {
    const m = await accepted('Date,A\n202001,0.1\n\n202002,NA\n202003,N/A\n202004,NaN\n202005,null\n202006,0.2\n');
    expect(m.frequency).toBe('monthly');
    expect(m.firstDate).toBe('2020-01');
    expect(m.series[0]!.stats).toMatchObject({ count: 2, missing: 4 });
    const d = await accepted('date,A\n20200102,0.1\n20200103,0.2\n');
    expect(d.frequency).toBe('daily');
    expect(d.lastDate).toBe('2020-01-03');
  });
});
