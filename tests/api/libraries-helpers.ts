/** Helpers for the return-library API tests: CSV builders and upload/confirm shortcuts. */
import type { Agent } from './helpers';
import { mulberry32 } from '../../lib/gmm/random';

/** A seeded PRNG (mulberry32), so generated test files are the same on every run. */
export const prng = mulberry32;

export function monthLabels(start: number, T: number, startMonth = 1): string[] {
  const out: string[] = [];
  for (let i = 0; i < T; i++) {
    const m = startMonth - 1 + i;
    out.push(`${start + Math.floor(m / 12)}-${String((m % 12) + 1).padStart(2, '0')}`);
  }
  return out;
}

/** A valid monthly CSV with `names` series of small decimal returns (or percent with `scale` 100). */
export function makeCsv(opts: { T?: number; names?: string[]; seed?: number; scale?: number; digits?: number } = {}): { csv: string; dates: string[]; values: number[][] } {
  const T = opts.T ?? 36;
  const names = opts.names ?? ['GRAIN', 'TIMBER', 'SALT', 'MKT', 'rf'];
  const rnd = prng(opts.seed ?? 1);
  const dates = monthLabels(2001, T);
  const values = names.map((n) => dates.map(() => {
    const base = n === 'rf' ? 0.002 + 0.0005 * rnd() : 0.01 + 0.05 * (rnd() - 0.5);
    const v = base * (opts.scale ?? 1);
    return opts.digits === undefined ? v : Number(v.toFixed(opts.digits));
  }));
  const lines = [['date', ...names].join(',')];
  dates.forEach((d, t) => lines.push([d, ...values.map((c) => String(c[t]))].join(',')));
  return { csv: `${lines.join('\n')}\n`, dates, values };
}

export function uploadCsv(agent: Agent, csv: string | Buffer, fileName = 'returns.csv') {
  return agent
    .post('/api/v1/libraries/uploads')
    .set('x-csrf-token', agent.csrf)
    .attach('file', Buffer.isBuffer(csv) ? csv : Buffer.from(csv, 'utf8'), { filename: fileName, contentType: 'text/csv' });
}

export function confirm(agent: Agent, uploadId: string, body: Record<string, unknown>) {
  return agent.post(`/api/v1/libraries/uploads/${uploadId}/confirm`).set('x-csrf-token', agent.csrf).send(body);
}

/** Upload + confirm in one go; returns { library, edition } from the confirm response. */
export async function createLibrary(
  agent: Agent,
  csv: string,
  body: { name?: string; visibility?: 'private' | 'shared'; units?: 'decimal' | 'percent'; libraryId?: number } = {},
): Promise<{ library: { id: number; name: string }; edition: { id: number; number: number } }> {
  const up = await uploadCsv(agent, csv);
  if (up.status !== 201) throw new Error(`upload failed ${up.status} ${JSON.stringify(up.body)}`);
  const cols = up.body.upload.columns as string[];
  const series = cols.map((name) => ({ name, kind: name === 'rf' ? 'rf' : name === 'MKT' ? 'factor' : 'asset', traded: name === 'MKT' }));
  const r = await confirm(agent, up.body.upload.id, {
    ...(body.libraryId ? { libraryId: body.libraryId } : { name: body.name ?? 'Test library', visibility: body.visibility ?? 'private' }),
    units: body.units ?? 'decimal',
    series,
  });
  if (r.status !== 201) throw new Error(`confirm failed ${r.status} ${JSON.stringify(r.body)}`);
  return r.body;
}
