/**
 * The server-facing `keelson` commands, run in process against a real listening Keelson server on
 * 127.0.0.1: sign-in, upload, run, show, export, compare, comment, and the exit codes on refusals.
 * The check: what the command line prints equals what the JSON API returns for the same run.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { envelopeLine, REMOTE_USAGE } from '../../bin/remote';
import { mulberry32 } from '../../lib/gmm/random';
import { main } from '../../bin/keelson-cli';
import { agentAs, makeTestApp, runCli, type TestApp } from './helpers';

let t: TestApp;
let server: Server;
let base: string;
const dirs: string[] = [];

function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'keelson-cli-'));
  dirs.push(d);
  return d;
}

/** Runs one command; returns exit code and what it printed. */
function cli(home: string, args: string[], password?: string) {
  return runCli(home, args, password);
}

/** A small seeded monthly library: 8 test assets priced by two traded factors (mulberry32 PRNG). */
function sampleCsv(): string {
  const u = mulberry32(20261201);
  const n = () => Math.sqrt(-2 * Math.log(u() + 1e-300)) * Math.cos(2 * Math.PI * u());
  const lines = ['date,' + Array.from({ length: 8 }, (_, i) => `P${i + 1}`).join(',') + ',MKT,TILT'];
  for (let i = 0; i < 240; i += 1) {
    const y = 2000 + Math.floor(i / 12);
    const m = String((i % 12) + 1).padStart(2, '0');
    const f1 = 0.006 + 0.045 * n();
    const f2 = 0.002 + 0.03 * n();
    const assets = Array.from({ length: 8 }, (_, j) => (0.8 + j * 0.05) * f1 + (j - 4) * 0.1 * f2 + 0.02 * n());
    lines.push([`${y}-${m}`, ...assets.map((v) => v.toFixed(6)), f1.toFixed(6), f2.toFixed(6)].join(','));
  }
  return lines.join('\n') + '\n';
}

beforeAll(async () => {
  t = await makeTestApp();
  server = t.app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', () => r()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  await new Promise<void>((r) => server.close(() => r()));
  await t.close();
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

describe('keelson command line against the server', () => {
  it('signs in, uploads, runs, shows and exports a run equal to the API', async () => {
    const home = tempDir();
    const csv = join(home, 'sample.csv');
    writeFileSync(csv, sampleCsv());
    const signIn = await cli(home, ['sign-in', '--server', base, '--email', 'researcher@keelson.test'], 'keelson-demo');
    expect(signIn.err).toBe('');
    expect(signIn.code).toBe(0);
    expect(signIn.out).toContain('Rhea Tolland (researcher)');
    expect((await cli(home, ['whoami'])).out).toContain('researcher@keelson.test');

    const up = await cli(home, ['upload', csv, '--name', 'CLI sample', '--factors', 'MKT,TILT', '--json']);
    expect(up.err).toBe('');
    expect(up.code).toBe(0);
    const stored = JSON.parse(up.out) as { library: { id: number }; edition: { id: number; number: number } };
    expect(stored.edition.number).toBe(1);

    const run = await cli(home, ['run', '--edition', String(stored.edition.id), '--factors', 'MKT,TILT', '--stage', 'iterated', '--json']);
    expect(run.err).toBe('');
    expect(run.code).toBe(0);
    const fromCli = JSON.parse(run.out) as { run: { id: number; status: string; result: { N: number; K: number; factors: { name: string; b: number }[] } } };
    expect(fromCli.run.status).toBe('finished');
    expect(fromCli.run.result.N).toBe(8); // every asset column, by default
    expect(fromCli.run.result.K).toBe(2);

    const agent = await agentAs(t.app, 'researcher');
    const api = (await agent.get(`/api/v1/runs/${fromCli.run.id}`).expect(200)).body as { run: { result: unknown } };
    expect(fromCli.run.result).toEqual(api.run.result);

    const shown = await cli(home, ['show', String(fromCli.run.id)]);
    expect(shown.code).toBe(0);
    expect(shown.out).toMatch(/MKT/);
    expect(shown.out).toContain('not investment advice');

    const csvOut = await cli(home, ['export', String(fromCli.run.id), '--format', 'csv']);
    const apiCsv = await agent.get(`/api/v1/runs/${fromCli.run.id}/export.csv`).expect(200);
    expect(csvOut.out).toBe(apiCsv.text);
    const tex = await cli(home, ['export', String(fromCli.run.id), '--format', 'tex']);
    expect(tex.out).toContain('\\begin{tabular}');

    const smaller = await cli(home, ['run', '--edition', String(stored.edition.id), '--factors', 'MKT', '--stage', 'iterated', '--json']);
    const smallId = (JSON.parse(smaller.out) as { run: { id: number } }).run.id;
    const cmp = await cli(home, ['compare', String(smallId), String(fromCli.run.id), '--json']);
    expect(cmp.code).toBe(0);
    const apiCmp = await agent.get(`/api/v1/runs/compare?a=${smallId}&b=${fromCli.run.id}`).expect(200);
    expect(JSON.parse(cmp.out).nested).toEqual(apiCmp.body.nested);

    const edition = await cli(home, ['edition-csv', String(stored.library.id), '1']);
    expect(edition.out.split('\n')[0]).toMatch(/^date,/);
  });

  it('exits 3 when not signed in or not allowed, 2 on caller mistakes, 1 when the server is unreachable', async () => {
    const nobody = tempDir();
    const notSigned = await cli(nobody, ['runs']);
    expect(notSigned.code).toBe(3);
    expect(notSigned.err).toMatch(/not signed in/);

    const desk = tempDir();
    expect((await cli(desk, ['sign-in', '--server', base, '--email', 'desk@keelson.test'], 'keelson-demo')).code).toBe(0);
    const denied = await cli(desk, ['comment', '1', '--text', 'looks fine']);
    expect(denied.code).toBe(3);
    expect(denied.err).toMatch(/reviewer/);

    const badId = await cli(desk, ['show', 'abc']);
    expect(badId.code).toBe(2);
    expect(badId.err).toMatch(/run id must be a positive whole number/);
    const badFormat = await cli(desk, ['export', '1', '--format', 'pdf']);
    expect(badFormat.code).toBe(2);
    const badOption = await cli(desk, ['runs', '--colour']);
    expect(badOption.code).toBe(2);
    expect(badOption.err).toMatch(/--colour/);

    const wrong = await cli(tempDir(), ['sign-in', '--server', base, '--email', 'desk@keelson.test'], 'not-the-password');
    expect(wrong.code).toBe(3);
    expect(wrong.err).toMatch(/E-mail or password is wrong/);

    const away = await cli(tempDir(), ['sign-in', '--server', 'http://127.0.0.1:9', '--email', 'desk@keelson.test'], 'x');
    expect(away.code).toBe(1);
    expect(away.err).toMatch(/cannot reach/);
  });

  it('run: --edition LIBRARY:N, --basis, --weighting covariance, --bootstrap-draws and --seed go into the spec; check --wait prints the result', async () => {
    const home = tempDir();
    const csv = join(home, 'sample.csv');
    writeFileSync(csv, sampleCsv());
    expect((await cli(home, ['sign-in', '--server', base, '--email', 'researcher@keelson.test'], 'keelson-demo')).code).toBe(0);
    const up = JSON.parse((await cli(home, ['upload', csv, '--name', 'CLI basis sample', '--factors', 'MKT,TILT', '--json'])).out) as { library: { id: number }; edition: { id: number } };
    const ref = `${up.library.id}:1`;
    const r = await cli(home, ['run', '--edition', ref, '--factors', 'MKT,TILT', '--stage', 'first', '--weighting', 'covariance', '--basis', 'bootstrap', '--bootstrap-draws', '99', '--seed', '4', '--json']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const run = (JSON.parse(r.out) as { run: { id: number; editionId: number; spec: { weighting: string; basis?: string; bootstrap?: unknown } } }).run;
    expect(run.editionId).toBe(up.edition.id); // LIBRARY:N resolved through the API
    expect(run.spec.weighting).toBe('covariance');
    expect(run.spec.basis).toBe('bootstrap');
    expect(run.spec.bootstrap).toEqual({ draws: 99, scheme: 'iid', seed: 4 });

    const std = await cli(home, ['run', '--edition', String(up.edition.id), '--factors', 'MKT,TILT', '--bootstrap-draws', '199', '--bootstrap-scheme', 'block', '--block-length', '6', '--json']);
    expect(std.code).toBe(0);
    const s2 = (JSON.parse(std.out) as { run: { spec: { basis?: string; bootstrap?: unknown } } }).run.spec;
    // No --basis: the server freezes the resolved default (standard for a second-stage spec) into the run.
    expect(s2.basis).toBe('standard');
    expect(s2.bootstrap).toEqual({ draws: 199, scheme: 'block', blockLength: 6, seed: 1 });

    const shown = await cli(home, ['show', String(run.id)]);
    expect(shown.out).toMatch(/^Run \d+ — finished — CLI basis sample, edition 1\nKeelson factor ledger\n/);
    expect(shown.out).toMatch(/first-stage GMM with the covariance weighting/);

    const check = await cli(home, ['check', String(run.id), '--kind', 'bootstrap', '--params', '{"draws":19,"seed":3}', '--wait']);
    expect(check.err).toBe('');
    expect(check.code).toBe(0);
    expect(check.out).toMatch(/^Job \d+: finished \(19\/19\)\nBootstrap: 19 of 19 iid draws, seed 3\n/);
    expect(check.out).toMatch(/^J +[0-9.]+ +[<0-9.]+ +[0-9.]+ +[0-9.]+$/m);
    expect(check.out).toMatch(/^b MKT \(\|t\|\)/m);
    expect(check.out).toContain('not investment advice');
  });

  it('run refusals: one line on stderr, exit 2 (robust basis on a second stage, bootstrap flags alone, unknown LIBRARY:N, server validation not doubled)', async () => {
    const home = tempDir();
    expect((await cli(home, ['sign-in', '--server', base, '--email', 'researcher@keelson.test'], 'keelson-demo')).code).toBe(0);
    const cases: [string[], RegExp][] = [
      [['run', '--edition', '1', '--factors', 'MKT', '--basis', 'robust'], /--basis robust needs a first-stage run .*add --stage first/],
      [['run', '--edition', '1', '--factors', 'MKT', '--basis', 'robust', '--stage', 'iterated'], /--basis robust needs a first-stage run/],
      [['run', '--edition', '1', '--factors', 'MKT', '--basis', 'hunch'], /--basis is standard, robust or bootstrap, got "hunch"/],
      [['run', '--edition', '1', '--factors', 'MKT', '--seed', '3'], /--seed needs the bootstrap: add --bootstrap-draws N or --basis bootstrap/],
      [['run', '--edition', '1', '--factors', 'MKT', '--bootstrap-draws', '5'], /--bootstrap-draws takes a whole number from 99 to 10000, got "5"/],
      [['run', '--edition', '1', '--factors', 'MKT', '--bootstrap-draws', '99', '--block-length', '3'], /--block-length needs --bootstrap-scheme block/],
      [['run', '--spec', '1', '--basis', 'standard'], /--basis and the bootstrap flags go with --factors/],
      [['run', '--edition', '999999:1', '--factors', 'MKT'], /libraries\/999999/],
      [['run', '--edition', 'one', '--factors', 'MKT'], /--edition takes an edition id or LIBRARY:N, got "one"/],
    ];
    for (const [args, message] of cases) {
      const r = await cli(home, args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err).toMatch(message);
      expect(r.err.trim().split('\n')).toHaveLength(1);
    }
    const { libraries } = (await (await agentAs(t.app, 'researcher')).get('/api/v1/libraries').expect(200)).body as { libraries: { id: number }[] };
    const lib = libraries[0].id;
    const noSuch = await cli(home, ['run', '--edition', `${lib}:99`, '--factors', 'MKT']);
    expect(noSuch.code).toBe(2);
    expect(noSuch.err).toMatch(new RegExp(`library ${lib} \\(.*\\) has no edition 99`));
    // the server refuses level 0.9 (at most 0.5): its message once, not repeated from the issues
    const bad = await cli(home, ['run', '--edition', `${lib}:1`, '--factors', 'MKT', '--level', '0.9']);
    expect(bad.code).toBe(2);
    expect(bad.err.trim().split('\n')).toHaveLength(1);
    expect(bad.err.split('The level is at most 0.5').length - 1).toBe(1);
  });

  it('limits prints this server’s mode and deep-check limits; help and a refused sweep name both modes’ limits', async () => {
    const home = tempDir();
    expect((await cli(home, ['sign-in', '--server', base, '--email', 'researcher@keelson.test'], 'keelson-demo')).code).toBe(0);
    const text = await cli(home, ['limits']);
    expect(text.code).toBe(0);
    expect(text.out).toContain('Deep checks on this server run without workers (embedded pool).');
    expect(text.out).toContain('Subset sweep: at most 15 candidate factors (32,767 models); at most 15 candidate factors without workers; 25 with queue workers.');
    expect(text.out).toContain('Bootstrap: at most 100,000 draws.');
    const asJson = await cli(home, ['limits', '--json']);
    expect(JSON.parse(asJson.out)).toMatchObject({ mode: 'embedded', sweepCandidates: 15, bootstrapDraws: 100_000 });
    expect(REMOTE_USAGE).toContain('subset-sweep: at most 15 candidate factors without workers; 25 with queue workers');
    expect(REMOTE_USAGE).toMatch(/keelson limits \[--json\]/);
    const names = Array.from({ length: 26 }, (_, i) => `F${i}`);
    const refused = await cli(home, ['check', '999999', '--kind', 'subset-sweep', '--params', JSON.stringify({ candidates: names })]);
    expect(refused.code).toBe(2);
    expect(refused.err).toMatch(/at most 15 candidate factors without workers; 25 with queue workers/);
    expect(refused.err.trim().split('\n')).toHaveLength(1);
  });

  it('envelopeLine keeps issues the message does not already say, each once', () => {
    expect(envelopeLine({ message: 'The spec is not valid: Choose at least one factor (at spec.factors)', issues: [{ message: 'Choose at least one factor' }] })).toBe(
      'The spec is not valid: Choose at least one factor (at spec.factors)',
    );
    expect(envelopeLine({ message: 'The request is not valid', issues: [{ message: 'The lag is a whole number' }, { message: 'The lag is a whole number' }, { message: 'Give a name.' }] })).toBe(
      'The request is not valid (also: The lag is a whole number; Give a name)',
    );
  });

  it('is reached through the same entry point as estimate', async () => {
    let out = '';
    const code = await main(['--help'], { out: (s) => (out += s), err: () => undefined });
    expect(code).toBe(0);
    expect(out).toContain('keelson sign-in');
    expect(out).toContain('keelson estimate');
  });
});
