/**
 * The methods page: GET /api/v1/docs/methods serves docs/methods.md read-only, as text/markdown,
 * to every signed-in role and to nobody signed out; the README points to it, never outside the
 * repository; and the README's date formats are the ones the upload parser accepts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { agentsForAllRoles, anonymousAgent, expectEnvelope, makeTestApp, type Agent, type TestApp } from './helpers';
import { ROLES, type Role } from '../../shared/roles';
import { METHODS_PATH } from '../../server/routes/docs';
import { parseDateCell } from '../../server/services/csv-import';

let t: TestApp;
let agents: Record<Role, Agent>;
const methods = readFileSync(METHODS_PATH, 'utf8');
const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

beforeAll(async () => {
  t = await makeTestApp();
  agents = await agentsForAllRoles(t.app);
});
afterAll(() => t.close());

describe('GET /api/v1/docs/methods', () => {
  it('serves docs/methods.md as text/markdown to every signed-in role', async () => {
    for (const role of ROLES) {
      const r = await agents[role].get('/api/v1/docs/methods').expect(200);
      expect(r.headers['content-type'], role).toMatch(/^text\/markdown; charset=utf-8/);
      expect(r.text).toBe(methods);
    }
  });

  it('answers 401 signed out, declares its roles and has no write route', async () => {
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get('/api/v1/docs/methods').expect(401)).body, 'unauthenticated');
    expect(t.app.routeTable.filter((r) => r.path.startsWith('/docs'))).toEqual([{ method: 'get', path: '/docs/methods', access: 'signed-in' }]);
  });
});

describe('docs/methods.md', () => {
  it('covers every estimator and convention the ledger uses, with its source', () => {
    const flat = methods.replace(/\s+/g, ' ');
    for (const term of [
      'Newey and West (1987)', 'L ≥ T/4', 'L > 2·T^(1/3)', 'Andrews 1991', 'Kan and Robotti (2008)', 'Hansen 1982', 'W = (Cov_T(R))^{-1}',
      'Gospodinov, Kan and Robotti 2014', 'first-stage runs get the drop test', 'computed **under the null**', 'Hall and Horowitz 1996',
      'recentre', 'Huberman and Kandel 1987', 'Kan and Zhang 1999', 'Gibbons, Ross and Shanken 1989', 'Shanken (1992)', 'The **basis**',
      'relative to b', 'Fama and MacBeth 1973',
    ]) expect(flat, term).toContain(term);
    for (const verdict of ['needed and priced', 'priced, not needed', 'needed, not priced alone', 'neither']) expect(methods).toContain(verdict);
  });
});

describe('README', () => {
  it('points to docs/methods.md and never to ../shared', () => {
    expect(readme).toContain('docs/methods.md');
    expect(readme).not.toMatch(/\.\.\/shared/);
  });

  it('starts with the job paragraph, then exactly the two set-up commands', () => {
    const blocks = [...readme.matchAll(/```sh\n([\s\S]*?)```/g)].map((m) => m[1].trim());
    expect(blocks.slice(0, 2)).toEqual(['npm install && npm start', 'npm test']);
    const first = readme.split('\n## ')[0];
    expect(first).toMatch(/^# Keelson\n\nKeelson helps/);
  });

  it('names only upload date formats that the parser accepts (each example parses, with its frequency)', () => {
    // what each format looks like and what the parser must make of it
    const examples: Record<string, { raw: string; date: string; frequency: 'monthly' | 'daily' }> = {
      'YYYY-MM': { raw: '2024-03', date: '2024-03', frequency: 'monthly' },
      YYYYMM: { raw: '202403', date: '2024-03', frequency: 'monthly' },
      'YYYY-MM-DD': { raw: '2024-03-28', date: '2024-03-28', frequency: 'daily' },
      YYYYMMDD: { raw: '20240328', date: '2024-03-28', frequency: 'daily' },
    };
    const section = readme.slice(readme.indexOf('### Return libraries'), readme.indexOf('### Model specs'));
    const named = [...section.matchAll(/`(Y{4}[-YMD]*)`/g)].map((m) => m[1]);
    expect(named.length).toBeGreaterThan(0);
    for (const f of named) {
      expect(examples[f], f).toBeDefined();
      const { raw, date, frequency } = examples[f];
      expect(parseDateCell(raw), f).toEqual({ date, frequency });
    }
  });
});
