/**
 * Deny by default: walks every /api/v1 route × every role (and signed-out) and checks that the
 * server answers 403/401 exactly where the route's declared access says so.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Test } from 'supertest';
import { ROLES, type Role } from '../../shared/roles';
import { agentsForAllRoles, anonymousAgent, expectEnvelope, makeTestApp, type Agent, type TestApp } from './helpers';

let t: TestApp;
let agents: Record<Role, Agent>;
let anon: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  agents = await agentsForAllRoles(t.app);
  anon = await anonymousAgent(t.app);
});
afterAll(() => t.close());

function concrete(path: string): string {
  return path.replace(/:([A-Za-z]+)/g, (_m, name: string) => (name === 'token' ? 'f'.repeat(64) : name === 'n' ? '1' : '999999'));
}

async function call(agent: Agent, method: string, path: string) {
  const url = `/api/v1${concrete(path)}`;
  const req = (agent as unknown as Record<string, (u: string) => Test>)[method](url);
  req.set('x-csrf-token', agent.csrf);
  if (method !== 'get' && method !== 'delete') req.send({});
  return req;
}

describe('route × role matrix', () => {
  it('has routes to walk, each with a declared access', () => {
    expect(t.app.routeTable.length).toBeGreaterThanOrEqual(12);
    for (const r of t.app.routeTable) expect(r.access).toBeDefined();
  });

  it('answers 401 to a signed-out caller on every non-public route', async () => {
    for (const r of t.app.routeTable) {
      if (r.access === 'public' || r.path === '/auth/logout') continue;
      const res = await call(anon, r.method, r.path);
      expect(res.status, `${r.method} ${r.path}`).toBe(401);
      expectEnvelope(res.body, 'unauthenticated');
    }
  });

  it('answers 403 exactly to the roles a route does not allow', async () => {
    let denied = 0;
    let allowed = 0;
    for (const r of t.app.routeTable) {
      if (r.access === 'public' || r.path.startsWith('/auth/log')) continue;
      for (const role of ROLES) {
        const mayCall = r.access === 'signed-in' || r.access.includes(role);
        const res = await call(agents[role], r.method, r.path);
        if (mayCall) {
          expect([401, 403], `${role} ${r.method} ${r.path} → ${res.status}`).not.toContain(res.status);
          allowed += 1;
        } else {
          expect(res.status, `${role} ${r.method} ${r.path}`).toBe(403);
          expectEnvelope(res.body, 'forbidden');
          denied += 1;
        }
      }
    }
    expect(denied).toBeGreaterThan(0);
    expect(allowed).toBeGreaterThan(0);
  });
});

describe('declared access of specs, runs and review routes', () => {
  // The walk above checks behaviour; this pins what each route is meant to allow (issue 5).
  const expected: Record<string, string> = {
    'get /specs': 'signed-in',
    'post /specs/check': 'signed-in',
    'post /specs': 'researcher,admin',
    'get /specs/:id': 'signed-in',
    'put /specs/:id': 'researcher,admin',
    'post /specs/:id/copy': 'researcher,admin',
    'get /runs': 'signed-in',
    'post /runs': 'researcher,admin',
    'get /runs/compare': 'signed-in',
    'get /runs/compare/export.csv': 'signed-in',
    'get /runs/compare/export.tex': 'signed-in',
    'get /runs/:id': 'signed-in',
    'get /runs/:id/result.json': 'signed-in',
    'get /runs/:id/export.csv': 'signed-in',
    'get /runs/:id/export.tex': 'signed-in',
    'post /runs/:id/cancel': 'researcher,admin',
    'get /review': 'signed-in',
    'get /review/reviewers': 'researcher,admin',
    'get /runs/:id/review': 'signed-in',
    'post /runs/:id/comments': 'reviewer,admin',
    'post /runs/:id/signoff': 'reviewer,admin',
    'post /runs/:id/signoff-requests': 'researcher,admin',
    'post /auth/password': 'signed-in',
    'post /auth/login': 'public',
    // Signed out is an answer there (200 { user: null }), so the browser logs no 401 on each signed-out load.
    'get /auth/me': 'public',
  };
  it('mounts every route with the intended roles (desk: read, compare, export only)', () => {
    const table = new Map(t.app.routeTable.map((r) => [`${r.method} ${r.path}`, Array.isArray(r.access) ? [...r.access].join(',') : String(r.access)]));
    for (const [route, access] of Object.entries(expected)) expect(table.get(route), route).toBe(access);
    const deskWrites = t.app.routeTable.filter(
      (r) => r.method !== 'get' && (r.path.startsWith('/runs') || r.path.startsWith('/specs')) && r.path !== '/specs/check' && (r.access === 'signed-in' || (r.access as readonly string[]).includes('desk')),
    );
    expect(deskWrites).toEqual([]);
  });
});
