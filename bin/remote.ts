/**
 * The server-facing half of the `keelson` command line: everything a user sees in the app, through
 * the JSON API. `keelson sign-in` keeps a session (cookie + CSRF token) in
 * `$KEELSON_HOME/session.json` (default `~/.keelson`), readable only by the user.
 *
 * Exit codes: 0 done; 2 a caller mistake (bad option, or the server refused the request as
 * invalid); 3 not signed in or not allowed; 1 anything else (server unreachable, server error).
 */
import { chmodSync, existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { basename, join } from 'node:path';
import { parseArgs } from 'node:util';
import { readErrorEnvelope, sendApiRequest } from '../shared/http-core';
import { jobLimitsResponseSchema, jobResponseSchema, sweepLimitText, drawsLimitText, type Job } from '../shared/jobs';
import { runResponseSchema, type LedgerResult } from '../shared/runs';
import type { LedgerResult as GmmLedgerResult } from '../lib/gmm/ledger';
import { renderLedgerText } from './ledger-text';

export interface Io {
  out: (s: string) => void;
  err: (s: string) => void;
  /** Reads all of standard input (for --password-stdin). */
  readStdin?: () => Promise<string>;
  env?: NodeJS.ProcessEnv;
}

/** A refusal or failure that ends the command with `exitCode` and one line on stderr. */
export class RemoteError extends Error {
  constructor(
    message: string,
    readonly exitCode: 1 | 2 | 3,
  ) {
    super(message);
    this.name = 'RemoteError';
  }
}

interface Session {
  server: string;
  cookie: string;
  csrf: string;
  email?: string;
}

function home(env: NodeJS.ProcessEnv): string {
  return env.KEELSON_HOME ?? join(homedir(), '.keelson');
}

function sessionFile(env: NodeJS.ProcessEnv): string {
  return join(home(env), 'session.json');
}

function loadSession(env: NodeJS.ProcessEnv): Session {
  const f = sessionFile(env);
  if (!existsSync(f)) throw new RemoteError('not signed in: run keelson sign-in --server URL --email ADDRESS first', 3);
  return JSON.parse(readFileSync(f, 'utf8')) as Session;
}

function saveSession(env: NodeJS.ProcessEnv, s: Session): void {
  mkdirSync(home(env), { recursive: true, mode: 0o700 });
  const f = sessionFile(env);
  writeFileSync(f, JSON.stringify(s), { mode: 0o600 });
  chmodSync(f, 0o600);
}

/** Keeps the session cookie from a response's set-cookie headers. */
function cookieFrom(res: Response, previous = ''): string {
  const set = res.headers.getSetCookie?.() ?? [];
  const sid = set.map((c) => c.split(';')[0]).find((c) => c.startsWith('keelson.sid='));
  return sid ?? previous;
}

/**
 * One line from an error envelope: the message, then only those issues the message does not
 * already say (the server's message often repeats the first issue).
 */
export function envelopeLine(error: { message: string; issues?: { message: string }[] }): string {
  const seen = new Set<string>();
  const extra = (error.issues ?? [])
    .map((i) => i.message.replace(/[.\s]+$/, ''))
    .filter((m) => m && !error.message.includes(m) && !seen.has(m) && (seen.add(m), true));
  return error.message + (extra.length ? ` (also: ${extra.join('; ')})` : '');
}

function exitCodeFor(status: number): 1 | 2 | 3 {
  if (status === 401 || status === 403) return 3;
  if (status >= 400 && status < 500) return 2;
  return 1;
}

/** One API call with the stored session; refreshes the stored cookie. */
class Client {
  constructor(
    private session: Session,
    private readonly env: NodeJS.ProcessEnv,
  ) {}

  async request(method: string, path: string, body?: unknown, raw = false): Promise<{ status: number; json?: unknown; text?: string }> {
    let res: Response;
    try {
      res = await sendApiRequest(
        this.session.server,
        path,
        { method, body, csrfToken: this.session.csrf, accept: raw ? '*/*' : 'application/json', headers: { cookie: this.session.cookie } },
        { redirect: 'manual' },
      );
    } catch (e) {
      throw new RemoteError(`cannot reach ${this.session.server}: ${(e as Error).message}`, 1);
    }
    const cookie = cookieFrom(res, this.session.cookie);
    if (cookie !== this.session.cookie) {
      this.session = { ...this.session, cookie };
      saveSession(this.env, this.session);
    }
    const type = res.headers.get('content-type') ?? '';
    if (!res.ok) {
      const env = type.includes('json') ? await readErrorEnvelope(res) : null;
      const msg = env ? envelopeLine(env) : `the server answered ${res.status}`;
      throw new RemoteError(`${method} ${path}: ${msg}`, exitCodeFor(res.status));
    }
    if (res.status === 204) return { status: 204 };
    if (raw || !type.includes('json')) return { status: res.status, text: await res.text() };
    return { status: res.status, json: await res.json() };
  }

  async get<T>(path: string): Promise<T> {
    return (await this.request('GET', path)).json as T;
  }
  async post<T>(path: string, body?: unknown): Promise<T> {
    return (await this.request('POST', path, body ?? {})).json as T;
  }
}

function list(v: unknown): string[] | undefined {
  if (typeof v !== 'string') return undefined;
  const xs = v
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  return xs.length ? xs : undefined;
}

function posInt(v: string | undefined, what: string): number {
  const n = Number(v);
  if (!v || !Number.isInteger(n) || n < 1) throw new RemoteError(`${what} must be a positive whole number, got "${v ?? ''}"`, 2);
  return n;
}

function parse<const O extends Record<string, { type: 'string' | 'boolean' }>>(args: string[], options: O, command: string) {
  try {
    return parseArgs({ args, options, allowPositionals: true as const, strict: true as const });
  } catch (e) {
    const msg = (e as Error).message.split('\n')[0];
    throw new RemoteError(`${command}: ${msg}`, 2);
  }
}

function fmt(x: number | null | undefined, d = 4): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(d);
}

function pad(rows: string[][]): string {
  const w = rows[0].map((_, j) => Math.max(...rows.map((r) => (r[j] ?? '').length)));
  return rows.map((r) => r.map((c, j) => (j === 0 ? c.padEnd(w[j]) : c.padStart(w[j]))).join('  ')).join('\n') + '\n';
}

/** A run's factor ledger as text (the same layout as `keelson estimate`, bin/ledger-text.ts). */
export function renderLedger(run: { id: number; status: string; error: string | null; result: LedgerResult | null; libraryName: string; editionNumber: number }): string {
  const head = `Run ${run.id} — ${run.status} — ${run.libraryName}, edition ${run.editionNumber}\n`;
  if (!run.result) return head + (run.error ? `Reason: ${run.error}\n` : '');
  return head + renderLedgerText(run.result as unknown as GmmLedgerResult, { source: `${run.libraryName}, edition ${run.editionNumber}` });
}

const RUN_OPTIONS = {
  'no-wait': { type: 'boolean' },
  edition: { type: 'string' },
  spec: { type: 'string' },
  name: { type: 'string' },
  assets: { type: 'string' },
  factors: { type: 'string' },
  'non-traded': { type: 'string' },
  rf: { type: 'string' },
  stage: { type: 'string' },
  weighting: { type: 'string' },
  lags: { type: 'string' },
  form: { type: 'string' },
  'means-known': { type: 'boolean' },
  level: { type: 'string' },
  start: { type: 'string' },
  end: { type: 'string' },
  'drop-set': { type: 'string' },
  basis: { type: 'string' },
  'bootstrap-draws': { type: 'string' },
  'bootstrap-scheme': { type: 'string' },
  'block-length': { type: 'string' },
  seed: { type: 'string' },
  json: { type: 'boolean' },
} as const;

export const REMOTE_USAGE = `Commands that talk to a Keelson server (sign in first):
  keelson sign-in --server URL --email ADDRESS [--password-stdin]   (or KEELSON_PASSWORD)
  keelson sign-out | keelson whoami
  keelson libraries [--json]                     return libraries you can read
  keelson library ID [--json]                    one library with its editions
  keelson upload FILE (--name NAME [--shared] | --library ID) [--factors F1,…] [--non-traded F,…] [--rf COL] [--percent] [--json]
  keelson edition-csv LIBRARY N                  an edition as CSV on stdout
  keelson run (--edition ID|LIBRARY:N --factors F1,… [--assets A,…] | --spec ID) [--non-traded …] [--rf COL]
              [--stage first|second|iterated] [--weighting identity|second-moment|covariance] [--lags N|auto]
              [--form centred|uncentred] [--means-known] [--level A] [--start D] [--end D] [--drop-set F,…]
              [--basis standard|robust|bootstrap] [--bootstrap-draws N] [--bootstrap-scheme iid|block]
              [--block-length N] [--seed S] [--no-wait] [--json]
              (a large run is queued: run waits for it, printing progress to stderr; --no-wait prints it and exits 0)
              (--edition takes an edition id, or LIBRARY:N for edition N of library LIBRARY)
  keelson runs [--status S] [--before ID] [--json] runs you can read, newest first, a page at a time
  keelson show RUN [--json]                      a run's factor ledger
  keelson export RUN --format csv|tex|json       a run's tables on stdout
  keelson compare RUN_A RUN_B [--json]           two runs side by side, with the nested drop test
  keelson check RUN --kind bootstrap|subset-sweep|rolling [--params JSON] [--wait] [--json]
              (subset-sweep: ${sweepLimitText()}; bootstrap: ${drawsLimitText()})
  keelson limits [--json]                        this server's mode (embedded or queue) and its deep-check limits
  keelson job ID [--wait] [--json] | keelson cancel JOB
  keelson cancel-run RUN                         stop a queued or running (large) run; it is kept as cancelled
  keelson comment RUN --text TEXT | keelson sign-off RUN --decision approved|changes-requested [--text NOTE]`;

async function readAll(stream: NodeJS.ReadableStream): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(Buffer.from(c as Buffer));
  return Buffer.concat(chunks).toString('utf8');
}

const REMOTE_COMMANDS = new Set([
  'sign-in', 'sign-out', 'whoami', 'libraries', 'library', 'upload', 'edition-csv', 'run', 'runs', 'show',
  'export', 'compare', 'check', 'job', 'cancel', 'cancel-run', 'comment', 'sign-off', 'limits',
]);

export function isRemoteCommand(command: string): boolean {
  return REMOTE_COMMANDS.has(command);
}


/** Runs one server-facing command; returns the exit code. */
export async function runRemote(command: string, args: string[], io: Io): Promise<number> {
  const env = io.env ?? process.env;
  const json = (v: unknown) => io.out(JSON.stringify(v, null, 2) + '\n');
  try {
    if (command === 'sign-in') {
      const p = parse(args, { server: { type: 'string' }, email: { type: 'string' }, 'password-stdin': { type: 'boolean' } }, command);
      const server = (p.values.server ?? env.KEELSON_SERVER ?? '').replace(/\/+$/, '');
      if (!/^https?:\/\//.test(server)) throw new RemoteError('sign-in: give --server http://host:port', 2);
      if (!p.values.email) throw new RemoteError('sign-in: give --email', 2);
      const password = p.values['password-stdin'] ? (await (io.readStdin ?? (() => readAll(process.stdin)))()).replace(/\r?\n$/, '') : env.KEELSON_PASSWORD;
      if (!password) throw new RemoteError('sign-in: give the password on stdin with --password-stdin, or in KEELSON_PASSWORD', 2);
      let res: Response;
      try {
        res = await fetch(`${server}/api/v1/auth/csrf`);
      } catch (e) {
        throw new RemoteError(`cannot reach ${server}: ${(e as Error).message}`, 1);
      }
      const { token } = (await res.json()) as { token: string };
      const client = new Client({ server, cookie: cookieFrom(res), csrf: token }, env);
      saveSession(env, { server, cookie: cookieFrom(res), csrf: token });
      const r = await client.post<{ user: { name: string; role: string; email: string }; csrfToken?: string }>('/auth/login', { email: p.values.email, password });
      const s = loadSession(env);
      // Sign-in rotates the CSRF token: keep the new one.
      saveSession(env, { ...s, email: r.user.email, csrf: r.csrfToken ?? s.csrf });
      io.out(`Signed in to ${server} as ${r.user.name} (${r.user.role}).\n`);
      return 0;
    }
    if (command === 'sign-out') {
      const f = sessionFile(env);
      if (existsSync(f)) {
        const c = new Client(loadSession(env), env);
        await c.request('POST', '/auth/logout').catch(() => undefined);
        rmSync(f);
      }
      io.out('Signed out.\n');
      return 0;
    }

    const client = new Client(loadSession(env), env);
    switch (command) {
      case 'whoami': {
        const { user } = await client.get<{ user: { name: string; email: string; role: string } | null }>('/auth/me');
        if (!user) throw new RemoteError('Not signed in: run keelson sign-in first', 3);
        io.out(`${user.name} <${user.email}> — ${user.role}\n`);
        return 0;
      }
      case 'libraries': {
        const p = parse(args, { json: { type: 'boolean' } }, command);
        const r = await client.get<{ libraries: { id: number; name: string; visibility: string; frequency: string | null; latestEdition?: number | null; editionCount?: number; archived?: boolean }[] }>('/libraries');
        if (p.values.json) return json(r), 0;
        const rows = [['id', 'name', 'visibility', 'frequency', 'editions']];
        for (const l of r.libraries) rows.push([String(l.id), l.name, l.visibility, l.frequency ?? '—', String(l.editionCount ?? l.latestEdition ?? '')]);
        io.out(pad(rows));
        return 0;
      }
      case 'library': {
        const p = parse(args, { json: { type: 'boolean' } }, command);
        const id = posInt(p.positionals[0], 'library id');
        const r = await client.get<{ library: { name: string; editions: { id: number; number: number; rows?: number; firstDate?: string; lastDate?: string }[] } }>(`/libraries/${id}`);
        if (p.values.json) return json(r), 0;
        io.out(`${r.library.name}\n`);
        const rows = [['edition', 'edition id', 'rows', 'from', 'to']];
        for (const e of r.library.editions) rows.push([String(e.number), String(e.id), String(e.rows ?? ''), e.firstDate ?? '', e.lastDate ?? '']);
        io.out(pad(rows));
        return 0;
      }
      case 'upload': {
        const p = parse(
          args,
          {
            name: { type: 'string' }, shared: { type: 'boolean' }, library: { type: 'string' }, factors: { type: 'string' },
            'non-traded': { type: 'string' }, rf: { type: 'string' }, percent: { type: 'boolean' }, json: { type: 'boolean' },
          },
          command,
        );
        const file = p.positionals[0];
        if (!file) throw new RemoteError('upload: give the CSV file', 2);
        if (!existsSync(file)) throw new RemoteError(`upload: ${file} does not exist`, 2);
        if (!p.values.library && !p.values.name) throw new RemoteError('upload: give --name for a new library, or --library ID for a new edition', 2);
        const form = new FormData();
        form.append('file', new Blob([readFileSync(file)], { type: 'text/csv' }), basename(file));
        const { upload } = (await client.request('POST', '/libraries/uploads', form)).json as {
          upload: { id: string; units: string; series: { name: string; suggestedKind: string }[]; warnings: { message: string }[] };
        };
        for (const w of upload.warnings) io.err(`note: ${w.message}\n`);
        const factors = list(p.values.factors);
        const nonTraded = list(p.values['non-traded']) ?? [];
        const names = new Set(upload.series.map((s) => s.name));
        for (const n of [...(factors ?? []), ...nonTraded, ...(p.values.rf ? [p.values.rf] : [])]) {
          if (!names.has(n)) throw new RemoteError(`upload: ${file} has no column "${n}"`, 2);
        }
        const series = upload.series.map((s) => {
          if (s.name === p.values.rf) return { name: s.name, kind: 'rf' as const };
          if (factors ? factors.includes(s.name) || nonTraded.includes(s.name) : s.suggestedKind === 'factor') {
            return { name: s.name, kind: 'factor' as const, traded: !nonTraded.includes(s.name) };
          }
          if (!factors && s.suggestedKind === 'rf') return { name: s.name, kind: 'rf' as const };
          return { name: s.name, kind: 'asset' as const };
        });
        const body = {
          ...(p.values.library ? { libraryId: posInt(p.values.library, '--library') } : { name: p.values.name, visibility: p.values.shared ? 'shared' : 'private' }),
          units: p.values.percent ? 'percent' : upload.units,
          series,
        };
        const r = await client.post<{ library: { id: number; name: string }; edition: { id: number; number: number } }>(`/libraries/uploads/${upload.id}/confirm`, body);
        if (p.values.json) return json(r), 0;
        io.out(`Stored ${r.library.name} (library ${r.library.id}), edition ${r.edition.number} (edition id ${r.edition.id}).\n`);
        return 0;
      }
      case 'edition-csv': {
        const p = parse(args, {}, command);
        const lib = posInt(p.positionals[0], 'library id');
        const n = posInt(p.positionals[1], 'edition number');
        io.out((await client.request('GET', `/libraries/${lib}/editions/${n}/export.csv`, undefined, true)).text ?? '');
        return 0;
      }
      case 'run': {
        const p = parse(args, RUN_OPTIONS, command);
        const v = p.values;
        let body: Record<string, unknown>;
        const choice = runBasisChoice(v);
        if (v.spec) {
          if (choice.basis || choice.bootstrap) throw new RemoteError('run: --basis and the bootstrap flags go with --factors; a saved spec (--spec) keeps its own basis', 2);
          body = { specId: posInt(v.spec, '--spec'), ...(v.edition ? { editionId: (await resolveEdition(client, v.edition)).id } : {}) };
        } else {
          const factors = list(v.factors);
          if (!v.edition || !factors) throw new RemoteError('run: give --edition ID and --factors F1,F2 (or --spec ID)', 2);
          const { id: editionId, edition } = await resolveEdition(client, v.edition);
          const assets = list(v.assets) ?? edition.series.filter((x) => x.kind === 'asset' && !factors.includes(x.name)).map((x) => x.name);
          const nonTraded = list(v['non-traded']) ?? edition.series.filter((x) => factors.includes(x.name) && x.kind === 'factor' && !x.traded).map((x) => x.name);
          const lags = v.lags === undefined || v.lags === 'auto' ? 'auto' : Number(v.lags);
          if (lags !== 'auto' && !Number.isInteger(lags)) throw new RemoteError(`run: --lags takes a whole number or auto, got "${v.lags}"`, 2);
          const level = v.level === undefined ? undefined : Number(v.level);
          if (level !== undefined && !(level > 0 && level < 1)) throw new RemoteError(`run: --level takes a number between 0 and 1, got "${v.level}"`, 2);
          body = {
            editionId,
            ...(v.name ? { name: v.name } : {}),
            spec: {
              assets,
              factors,
              nonTraded,
              ...(v.stage ? { stage: v.stage } : {}),
              ...(v.weighting ? { weighting: v.weighting } : {}),
              lags,
              ...(v.form ? { form: v.form } : {}),
              factorMeansKnown: Boolean(v['means-known']),
              ...(level !== undefined ? { level } : {}),
              ...(v.rf ? { rf: v.rf } : {}),
              ...(v.start || v.end ? { window: { ...(v.start ? { start: v.start } : {}), ...(v.end ? { end: v.end } : {}) } } : {}),
              ...(list(v['drop-set']) ? { dropSet: list(v['drop-set']) } : {}),
              ...(choice.basis ? { basis: choice.basis } : {}),
              ...(choice.bootstrap ? { bootstrap: choice.bootstrap } : {}),
            },
          };
        }
        let { run } = await client.post<{ run: Parameters<typeof renderLedger>[0] }>('/runs', body);
        // a heavy run is answered 202 queued: wait for it (progress on stderr) unless --no-wait
        if (run.status === 'queued' || run.status === 'running') {
          if (v['no-wait']) {
            if (v.json) return json({ run }), 0;
            io.out(`Run #${run.id} is ${run.status} (a large run, estimated by a worker). Follow it with: keelson show ${run.id}\n`);
            return 0;
          }
          const t0 = Date.now();
          let last = '';
          while (run.status === 'queued' || run.status === 'running') {
            const line = `run #${run.id}: ${run.status} (${Math.round((Date.now() - t0) / 1000)} s)`;
            if (line !== last) io.err(`${line}\n`);
            last = line;
            await new Promise((r) => setTimeout(r, 1000));
            ({ run } = await client.get<{ run: Parameters<typeof renderLedger>[0] }>(`/runs/${run.id}`));
          }
        }
        if (v.json) return json({ run }), 0;
        io.out(renderLedger(run));
        return run.status === 'finished' ? 0 : 1;
      }
      case 'runs': {
        const p = parse(args, { status: { type: 'string' }, before: { type: 'string' }, json: { type: 'boolean' } }, command);
        const qs = new URLSearchParams();
        if (p.values.status) qs.set('status', p.values.status);
        if (p.values.before) qs.set('before', String(posInt(p.values.before, '--before')));
        const q = qs.size ? `?${qs.toString()}` : '';
        const r = await client.get<{
          runs: { id: number; status: string; libraryName: string; editionNumber: number; authorName: string; factors: string[]; signoff: string; createdAt: string }[];
          total: number;
          nextCursor: number | null;
        }>(`/runs${q}`);
        if (p.values.json) return json(r), 0;
        const rows = [['run', 'status', 'library', 'factors', 'author', 'sign-off', 'created']];
        for (const x of r.runs) rows.push([String(x.id), x.status, `${x.libraryName} #${x.editionNumber}`, x.factors.join(','), x.authorName, x.signoff, x.createdAt.slice(0, 16)]);
        io.out(pad(rows));
        if (r.nextCursor !== null) io.out(`${r.runs.length} of ${r.total} runs shown; the next page: keelson runs --before ${r.nextCursor}\n`);
        return 0;
      }
      case 'show': {
        const p = parse(args, { json: { type: 'boolean' } }, command);
        const { run } = await client.get<{ run: Parameters<typeof renderLedger>[0] }>(`/runs/${posInt(p.positionals[0], 'run id')}`);
        if (p.values.json) return json({ run }), 0;
        io.out(renderLedger(run));
        return 0;
      }
      case 'export': {
        const p = parse(args, { format: { type: 'string' } }, command);
        const id = posInt(p.positionals[0], 'run id');
        const format = p.values.format ?? 'csv';
        const path = { csv: 'export.csv', tex: 'export.tex', json: 'result.json' }[format];
        if (!path) throw new RemoteError(`export: --format is csv, tex or json, got "${format}"`, 2);
        io.out((await client.request('GET', `/runs/${id}/${path}`, undefined, true)).text ?? '');
        return 0;
      }
      case 'compare': {
        const p = parse(args, { json: { type: 'boolean' } }, command);
        const a = posInt(p.positionals[0], 'first run id');
        const b = posInt(p.positionals[1], 'second run id');
        const r = await client.get<{ a: Parameters<typeof renderLedger>[0]; b: Parameters<typeof renderLedger>[0]; nested: { nested: boolean; reason: string | null; dropped: string[]; test: { stat: number; df: number; p: number } | null } }>(`/runs/compare?a=${a}&b=${b}`);
        if (p.values.json) return json(r), 0;
        io.out(renderLedger(r.a) + '\n' + renderLedger(r.b) + '\n');
        io.out(
          r.nested.test
            ? `Nested: dropping ${r.nested.dropped.join(', ')} — χ² ${fmt(r.nested.test.stat, 3)} (df ${r.nested.test.df}, p ${fmt(r.nested.test.p, 4)})\n`
            : `No nested drop test: ${r.nested.reason ?? 'the runs are not nested'}\n`,
        );
        return 0;
      }
      case 'check': {
        const p = parse(args, { kind: { type: 'string' }, params: { type: 'string' }, wait: { type: 'boolean' }, json: { type: 'boolean' } }, command);
        const runId = posInt(p.positionals[0], 'run id');
        let params: unknown = {};
        if (p.values.params) {
          try {
            params = JSON.parse(p.values.params);
          } catch {
            throw new RemoteError('check: --params must be JSON, e.g. {"draws":999}', 2);
          }
        }
        const { job } = jobResponseSchema.parse(await client.post<unknown>(`/runs/${runId}/checks`, { kind: p.values.kind, params }));
        return await followJob(client, job, Boolean(p.values.wait), Boolean(p.values.json), io);
      }
      case 'limits': {
        const p = parse(args, { json: { type: 'boolean' } }, command);
        const { limits } = jobLimitsResponseSchema.parse(await client.get<unknown>('/jobs/limits'));
        if (p.values.json) return json(limits), 0;
        const n = (v: number) => v.toLocaleString('en-US');
        io.out(
          `Deep checks on this server run ${limits.mode === 'queue' ? 'on queue workers' : 'without workers (embedded pool)'}.\n` +
            `Subset sweep: at most ${limits.sweepCandidates} candidate factors (${n(2 ** limits.sweepCandidates - 1)} models); ${sweepLimitText()}.\n` +
            `Bootstrap: at most ${n(limits.bootstrapDraws)} draws.\n`,
        );
        return 0;
      }
      case 'job': {
        const p = parse(args, { wait: { type: 'boolean' }, json: { type: 'boolean' } }, command);
        const { job } = jobResponseSchema.parse(await client.get<unknown>(`/jobs/${posInt(p.positionals[0], 'job id')}`));
        return await followJob(client, job, Boolean(p.values.wait), Boolean(p.values.json), io);
      }
      case 'cancel': {
        const p = parse(args, {}, command);
        const { job } = jobResponseSchema.parse(await client.post<unknown>(`/jobs/${posInt(p.positionals[0], 'job id')}/cancel`));
        io.out(`Job ${job.id}: ${job.status}\n`);
        return 0;
      }
      case 'cancel-run': {
        const p = parse(args, {}, command);
        const { run } = runResponseSchema.parse(await client.post<unknown>(`/runs/${posInt(p.positionals[0], 'run id')}/cancel`));
        io.out(`Run ${run.id}: ${run.status}${run.error ? ` (${run.error})` : ''}\n`);
        return 0;
      }
      case 'comment': {
        const p = parse(args, { text: { type: 'string' } }, command);
        await client.post(`/runs/${posInt(p.positionals[0], 'run id')}/comments`, { text: p.values.text ?? '' });
        io.out('Comment added.\n');
        return 0;
      }
      case 'sign-off': {
        const p = parse(args, { decision: { type: 'string' }, text: { type: 'string' } }, command);
        const id = posInt(p.positionals[0], 'run id');
        await client.post(`/runs/${id}/signoff`, { decision: p.values.decision, ...(p.values.text ? { note: p.values.text } : {}) });
        io.out(`Run ${id}: ${p.values.decision}.\n`);
        return 0;
      }
      default:
        throw new RemoteError(`unknown command "${command}"`, 2);
    }
  } catch (e) {
    if (e instanceof RemoteError) {
      io.err(`keelson: ${e.message}\n`);
      return e.exitCode;
    }
    throw e;
  }
}

type EditionSeries = { series: { name: string; kind: string; traded: boolean }[] };

/**
 * An edition from `--edition`: an edition id, or LIBRARY:N (edition N of library LIBRARY), resolved
 * through the API; returns its id and series.
 */
async function resolveEdition(client: Client, ref: string): Promise<{ id: number; edition: EditionSeries }> {
  const pair = /^(\d+):(\d+)$/.exec(ref.trim());
  if (pair) {
    const libraryId = posInt(pair[1], '--edition library id');
    const number = posInt(pair[2], '--edition number');
    const { library } = await client.get<{ library: { name: string; editions: { id: number; number: number }[] } }>(`/libraries/${libraryId}`);
    const e = library.editions.find((x) => x.number === number);
    if (!e) throw new RemoteError(`run: library ${libraryId} (${library.name}) has no edition ${number} (it has ${library.editions.map((x) => x.number).join(', ') || 'none'})`, 2);
    const { edition } = await client.get<{ edition: EditionSeries }>(`/libraries/${libraryId}/editions/${number}`);
    return { id: e.id, edition };
  }
  if (!/^\d+$/.test(ref.trim())) throw new RemoteError(`run: --edition takes an edition id or LIBRARY:N, got "${ref}"`, 2);
  const editionId = posInt(ref.trim(), '--edition');
  const { libraries } = await client.get<{ libraries: { id: number }[] }>('/libraries');
  for (const l of libraries) {
    const { library } = await client.get<{ library: { editions: { id: number; number: number }[] } }>(`/libraries/${l.id}`);
    const e = library.editions.find((x) => x.id === editionId);
    if (e) return { id: editionId, edition: (await client.get<{ edition: EditionSeries }>(`/libraries/${l.id}/editions/${e.number}`)).edition };
  }
  throw new RemoteError(`run: no edition with id ${editionId} among the libraries you can read (see keelson libraries)`, 2);
}

function wholeIn(v: string, flag: string, lo: number, hi: number): number {
  if (!/^\d+$/.test(v) || Number(v) < lo || Number(v) > hi) throw new RemoteError(`run: --${flag} takes a whole number from ${lo} to ${hi}, got "${v}"`, 2);
  return Number(v);
}

/** `run`'s basis and bootstrap flags → the spec's `basis` / `bootstrap` fields (shared/specs.ts). */
export function runBasisChoice(v: { stage?: string; basis?: string; 'bootstrap-draws'?: string; 'bootstrap-scheme'?: string; 'block-length'?: string; seed?: string }): {
  basis?: 'standard' | 'robust' | 'bootstrap';
  bootstrap?: { draws: number; scheme: 'iid' | 'block'; seed: number; blockLength?: number };
} {
  if (v.basis !== undefined && !['standard', 'robust', 'bootstrap'].includes(v.basis))
    throw new RemoteError(`run: --basis is standard, robust or bootstrap, got "${v.basis}"`, 2);
  const basis = v.basis as 'standard' | 'robust' | 'bootstrap' | undefined;
  if (basis === 'robust' && (v.stage ?? 'second') !== 'first')
    throw new RemoteError('run: --basis robust needs a first-stage run (robust SEs need a weighting that does not depend on b): add --stage first', 2);
  const asked = basis === 'bootstrap' || v['bootstrap-draws'] !== undefined;
  if (!asked) {
    for (const f of ['bootstrap-scheme', 'block-length', 'seed'] as const)
      if (v[f] !== undefined) throw new RemoteError(`run: --${f} needs the bootstrap: add --bootstrap-draws N or --basis bootstrap`, 2);
    return basis ? { basis } : {};
  }
  const scheme = v['bootstrap-scheme'] ?? 'iid';
  if (scheme !== 'iid' && scheme !== 'block') throw new RemoteError(`run: --bootstrap-scheme is iid or block, got "${scheme}"`, 2);
  if (v['block-length'] !== undefined && scheme !== 'block') throw new RemoteError('run: --block-length needs --bootstrap-scheme block', 2);
  const bootstrap = {
    draws: v['bootstrap-draws'] === undefined ? 999 : wholeIn(v['bootstrap-draws'], 'bootstrap-draws', 99, 10000),
    scheme: scheme as 'iid' | 'block',
    seed: v.seed === undefined ? 1 : wholeIn(v.seed, 'seed', 0, 2 ** 31 - 1),
    ...(v['block-length'] !== undefined ? { blockLength: wholeIn(v['block-length'], 'block-length', 1, 10000) } : {}),
  };
  return { ...(basis ? { basis } : {}), bootstrap };
}

/** What `check --wait` prints about a finished deep check: the result, not only its status. */
export function renderJobResult(job: Job): string {
  if (!job.result) return '';
  const p = (x: number | null | undefined) => (typeof x === 'number' ? (x < 0.001 ? '<0.001' : x.toFixed(3)) : '–');
  let s = '';
  if (job.kind === 'bootstrap' && job.result) {
    const b = job.result;
    s += `Bootstrap: ${b.validDraws} of ${b.draws} ${b.scheme === 'block' ? `block (length ${b.blockLength})` : 'iid'} draws, seed ${b.seed}${b.correction === 'hall-horowitz' ? ', Hall–Horowitz block correction' : ''}\n`;
    const rows = [['test', 'statistic', 'p asymptotic', 'p bootstrap', '5% critical']];
    rows.push(['J', b.J.stat.toFixed(2), p(b.J.asymptoticP), p(b.J.bootstrapP), b.J.critical95.toFixed(2)]);
    for (const f of b.factors) {
      rows.push([`b ${f.name} (|t|)`, Math.abs(f.wald.stat).toFixed(2), p(f.wald.asymptoticP), p(f.wald.bootstrapP), f.wald.critical95.toFixed(2)]);
      if (f.lambda) rows.push([`λ ${f.name} (|t|)`, Math.abs(f.lambda.stat).toFixed(2), p(f.lambda.asymptoticP), p(f.lambda.bootstrapP), f.lambda.critical95.toFixed(2)]);
      if (f.drop) rows.push([`drop ${f.name} (χ²)`, f.drop.stat.toFixed(2), p(f.drop.asymptoticP), p(f.drop.bootstrapP), f.drop.critical95.toFixed(2)]);
    }
    for (const [label, t] of [['joint Wald', b.joint?.wald], ['joint drop', b.joint?.drop]] as const)
      if (t) rows.push([`${label} {${b.joint!.factors.join(', ')}}`, t.stat.toFixed(2), p(t.asymptoticP), p(t.bootstrapP), t.critical95.toFixed(2)]);
    s += pad(rows);
    for (const n of b.notes ?? []) s += `  - ${n}\n`;
  } else if (job.kind === 'subset-sweep' && job.result) {
    const w = job.result;
    s += `Subset sweep: ${w.models} models${w.singular ? ` (${w.singular} singular, skipped)` : ''}\n`;
    const rows = [['smallest adequate models', 'HJ', 'drop χ²', 'df', 'p']];
    for (const m of w.adequate) rows.push([m.factors.join(' + '), m.hj.toFixed(4), m.drop.toFixed(2), String(m.df), p(m.p)]);
    s += rows.length > 1 ? pad(rows) : `No model smaller than the full one passes the drop test at ${w.level}.\n`;
    s += `Factor frequency among the best models: ${w.factorFrequency.map((f) => `${f.name} ${(f.share * 100).toFixed(0)}%`).join(', ')}\n`;
  } else if (job.kind === 'rolling' && job.result) {
    const w = job.result;
    const ok = w.points.filter((x) => x.ok);
    s += `Rolling check (${w.kind}, ${w.length} periods, step ${w.step}): ${ok.length} windows estimated${w.failed ? `, ${w.failed} failed` : ''}\n`;
    if (ok.length) {
      const rows = [['factor', 'b first', 'b last', 'b min', 'b max', 'windows with |t(b)| ≥ z']];
      w.factorNames.forEach((name, k) => {
        const bs = ok.map((x) => x.b[k]);
        rows.push([name, bs[0].toFixed(3), bs[bs.length - 1].toFixed(3), Math.min(...bs).toFixed(3), Math.max(...bs).toFixed(3), `${ok.filter((x) => Math.abs(x.tB[k]) >= w.z).length} of ${ok.length}`]);
      });
      s += pad(rows);
    }
  }
  return s ? s + 'Statistical evidence, not investment advice.\n' : '';
}

async function followJob(client: Client, first: Job, wait: boolean, asJson: boolean, io: Io): Promise<number> {
  let job = first;
  while (wait && (job.status === 'queued' || job.status === 'running')) {
    await new Promise((r) => setTimeout(r, 250));
    job = jobResponseSchema.parse(await client.get<unknown>(`/jobs/${job.id}`)).job;
  }
  if (asJson) io.out(JSON.stringify({ job }, null, 2) + '\n');
  else {
    io.out(`Job ${job.id}: ${job.status} (${job.done}/${job.total})${job.error ? ` — ${job.error}` : ''}\n`);
    if (job.status === 'finished') io.out(renderJobResult(job));
  }
  return job.status === 'failed' ? 1 : 0;
}
