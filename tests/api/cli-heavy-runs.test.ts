/**
 * `keelson run` on a heavy run (threshold set to 1, so every run is queued): by default the command
 * waits for the worker, printing progress to stderr, and ends with the ledger the API serves;
 * `--no-wait` prints the queued run and exits 0. In process against a real listening server.
 * Data: the invented economy of runs-fixture.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { agentAs, makeTestApp, runCli, type TestApp } from './helpers';
import { FIX_ASSETS, makeFixture, uploadFixture } from './runs-fixture';

let t: TestApp;
let server: Server;
let base: string;
let home: string;
let editionId: number;

function cli(args: string[], password?: string) {
  return runCli(home, args, password);
}

beforeAll(async () => {
  t = await makeTestApp({ heavyRunCost: 1 });
  server = t.app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', () => r()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  home = mkdtempSync(join(tmpdir(), 'keelson-cli-heavy-'));
  editionId = (await uploadFixture(await agentAs(t.app, 'admin'), makeFixture(), { name: 'Invented economy', visibility: 'shared' })).editionId;
  expect((await cli(['sign-in', '--server', base, '--email', 'researcher@keelson.test'], 'keelson-demo')).code).toBe(0);
});
afterAll(async () => {
  await new Promise<void>((r) => server.close(() => r()));
  await t.close();
  rmSync(home, { recursive: true, force: true });
});

describe('keelson run on a heavy run', () => {
  it('waits by default, with progress on stderr, and prints the finished ledger the API serves', async () => {
    const r = await cli(['run', '--edition', String(editionId), '--factors', 'MKT,ECHO', '--assets', FIX_ASSETS.join(','), '--rf', 'RF', '--json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { run: { id: number; status: string; result: unknown } };
    expect(out.run.status).toBe('finished');
    expect(r.err).toMatch(new RegExp(`run #${out.run.id}: (queued|running)`));
    const api = (await (await agentAs(t.app, 'researcher')).get(`/api/v1/runs/${out.run.id}`).expect(200)).body as { run: { result: unknown } };
    expect(out.run.result).toEqual(api.run.result);
  });

  it('--no-wait prints the queued run and exits 0', async () => {
    const r = await cli(['run', '--edition', String(editionId), '--factors', 'MKT,ECHO', '--assets', FIX_ASSETS.join(','), '--rf', 'RF', '--no-wait', '--json']);
    expect(r.code).toBe(0);
    const out = JSON.parse(r.out) as { run: { id: number; status: string; result: unknown } };
    expect(out.run.status).toBe('queued');
    expect(out.run.result).toBeNull();
    const text = await cli(['run', '--edition', String(editionId), '--factors', 'MKT', '--assets', FIX_ASSETS.join(','), '--rf', 'RF', '--no-wait']);
    expect(text.code).toBe(0);
    expect(text.out).toMatch(/^Run #\d+ is (queued|running) .*keelson show \d+/);
  });
});
