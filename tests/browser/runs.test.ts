/**
 * Specs, runs, the factor ledger and review end to end on the demo library (Harbour market):
 * a researcher states a model and runs it, reads the ledger (SWELL is built to be priced but not
 * needed), exports CSV and checks it against the API; a reviewer comments and approves; the
 * author's outbox has the e-mails; a desk user compares two runs and cannot edit.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import Papa from 'papaparse';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, scrollShots, shot, signIn, apiPost, type Viewport } from './helpers';

let browser: Browser;
let runId = 0;
let smallRunId = 0;
let specId = 0;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Screenshots of the whole scrolling screen (helpers.ts scrollShots). */
const shots = (page: Page, name: string, max = 6) => scrollShots(page, name, { max, pauseMs: 300 });

async function api<T = Record<string, unknown>>(page: Page, path: string): Promise<T> {
  const r = await page.request.get(`/api/v1${path}`);
  expect(r.status(), path).toBe(200);
  return (await r.json()) as T;
}

async function fillSpec(page: Page, factors: string[], name: string) {
  await page.getByRole('radio', { name: 'Harbour market (demo)' }).click();
  await page.getByRole('button', { name: /^All \d+ test assets$/ }).click();
  for (const f of factors) await page.getByRole('checkbox', { name: `Factor ${f}` }).click();
  await page.getByRole('radio', { name: 'subtract RF' }).click();
  await page.getByLabel('Spec name', { exact: true }).fill(name);
}

describe('researcher: spec → run → ledger → export', () => {
  it('refuses an impossible spec before submit, then runs the five-factor model and shows SWELL as priced, not needed', async () => {
    const { context, page, requests, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    await page.goto('/runs/new');
    // impossible choice: a window too short for N + K
    await fillSpec(page, ['TIDE', 'SWELL', 'DRIFT', 'GALE', 'BALLAST'], 'Five harbour factors');
    await page.getByLabel('Window end', { exact: true }).fill('1976-06');
    const problems = page.getByRole('alert', { name: 'Problems with this spec' });
    await expect(problems.textContent()).resolves.toMatch(/T = 18 periods is too few for N = 25 assets and K = 5 factors/);
    await expect(page.getByRole('button', { name: 'Save spec and run' }).getAttribute('aria-disabled')).resolves.toBe('true');
    await page.getByLabel('Window end', { exact: true }).fill('');
    await expect(page.getByLabel('Model size').textContent()).resolves.toMatch(/df = N − K\s*20/);
    await shots(page, 'spec-form-wide', 4);

    await page.getByRole('button', { name: 'Save spec and run' }).click();
    await page.waitForURL(/\/runs\/\d+$/);
    runId = Number(page.url().split('/').pop());
    await page.getByRole('table', { name: 'Factor ledger' }).waitFor();
    await expect(page.getByRole('button', { name: 'Verdict for SWELL: priced, not needed' }).isVisible()).resolves.toBe(true);
    await expect(page.getByRole('button', { name: 'Verdict for TIDE: needed and priced' }).isVisible()).resolves.toBe(true);
    // the caution shows once
    await expect(page.getByText('Asymptotic p-values can mislead', { exact: false }).count()).resolves.toBe(1);

    // one tap on a cell shows the test and its numbers
    await page.getByRole('button', { name: 'b of SWELL: what the test asks' }).click();
    const dialog = page.getByRole('dialog', { name: /Needed\? — SDF loading b for SWELL/ });
    await dialog.waitFor();
    const run = (await api<{ run: { result: { factors: { name: string; b: number; pB: number }[] }; specId: number } }>(page, `/runs/${runId}`)).run;
    specId = run.specId;
    const swell = run.result.factors.find((f) => f.name === 'SWELL')!;
    await expect(dialog.textContent()).resolves.toContain(swell.b.toFixed(4));
    await shot(page, 'ledger-detail-wide');
    await dialog.getByRole('button', { name: 'Close' }).click();
    await shots(page, 'run-wide', 8);

    // ask the reviewer for a sign-off
    await page.getByRole('radio', { name: 'Ravi Okonedo (reviewer)' }).click();
    const requestPost = page.waitForRequest((q) => q.method() === 'POST' && q.url().endsWith(`/runs/${runId}/signoff-requests`));
    await page.getByRole('button', { name: 'Request sign-off' }).click();
    expect((await requestPost).headers()['idempotency-key']).toMatch(/^[0-9a-f]{32}$/);
    await page.getByText('Request sent; the reviewer gets an e-mail.').waitFor();

    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('downloads a CSV whose numbers equal the API’s exactly', async () => {
    const { context, page } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    await page.goto(`/runs/${runId}`);
    await page.getByRole('table', { name: 'Factor ledger' }).waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Export CSV' }).click()]);
    const csv = readFileSync((await download.path())!, 'utf8');
    const rows = Papa.parse<string[]>(csv.trim()).data;
    const h = rows.findIndex((r) => r[0] === 'factor');
    const run = (await api<{ run: { result: { factors: Record<string, unknown>[] } } }>(page, `/runs/${runId}`)).run;
    const col = (n: string) => rows[h].indexOf(n);
    run.result.factors.forEach((f, k) => {
      const row = rows[h + 1 + k];
      expect(row[0]).toBe(f.name);
      expect(Number(row[col('b')])).toBe(f.b);
      expect(Number(row[col('t_b')])).toBe(f.tB);
      expect(Number(row[col('lambda')])).toBe(f.lambda);
      expect(Number(row[col('p_lambda')])).toBe(f.pLambda);
      expect(row[col('verdict')]).toBe(f.verdict);
    });
    await context.close();
  });

  it('shows the ledger as one card per factor on a phone', async () => {
    const { context, page, errors } = await openPage(browser, PHONE);
    await signIn(page, 'researcher');
    await page.goto(`/runs/${runId}`);
    await page.getByRole('list', { name: 'Factor ledger' }).waitFor();
    await expect(page.getByRole('list', { name: 'Factor ledger' }).getByRole('listitem').count()).resolves.toBe(5);
    await shots(page, 'run-phone', 10);
    // a smaller nested model for the compare below (same data and options, without SWELL), through the API
    const r = await apiPost(page, '/runs', { specId });
    expect(r.status()).toBe(201);
    const spec = ((await r.json()) as { run: { spec: Record<string, unknown> } }).run.spec;
    const small = await apiPost(page, '/runs', { editionId: (await api<{ run: { editionId: number } }>(page, `/runs/${runId}`)).run.editionId, spec: { ...spec, factors: ['TIDE', 'DRIFT', 'GALE', 'BALLAST'] } });
    expect(small.status()).toBe(201);
    smallRunId = ((await small.json()) as { run: { id: number } }).run.id;
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('reviewer: comment and approve', () => {
  it('finds the run awaiting sign-off, comments and approves; the author’s outbox has the e-mails', async () => {
    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'reviewer');
    await page.goto('/review');
    await page.getByText(`Run #${runId}`, { exact: false }).first().waitFor();
    await shot(page, 'review-queue-wide');
    await page.getByRole('link', { name: `Open run ${runId}` }).first().click();
    await page.waitForURL(new RegExp(`/runs/${runId}$`));
    await page.getByLabel('Comment', { exact: true }).fill('Drop tests agree with the b t-statistics.');
    const commentPost = page.waitForRequest((q) => q.method() === 'POST' && q.url().endsWith(`/runs/${runId}/comments`));
    await page.getByRole('button', { name: 'Add comment' }).click();
    // every creating POST of the run page carries a fresh Idempotency-Key (one per press)
    expect((await commentPost).headers()['idempotency-key']).toMatch(/^[0-9a-f]{32}$/);
    await page.getByText('Drop tests agree with the b t-statistics.').waitFor();
    await page.getByLabel('Sign-off note (optional)', { exact: true }).fill('Approved for the desk.');
    const signoffPost = page.waitForRequest((q) => q.method() === 'POST' && q.url().endsWith(`/runs/${runId}/signoff`));
    await page.getByRole('button', { name: 'Approve' }).click();
    expect((await signoffPost).headers()['idempotency-key']).toMatch(/^[0-9a-f]{32}$/);
    await page.getByText('Ravi Okonedo: approved').waitFor();
    await shots(page, 'run-reviewed-wide', 10);
    const mine = await api<{ messages: { subject: string }[] }>(page, '/auth/outbox');
    expect(mine.messages.map((m) => m.subject)).toContain(`Sign-off requested: run #${runId}`);
    expect(errors).toEqual([]);
    await context.close();

    const author = await openPage(browser, PHONE);
    await signIn(author.page, 'researcher');
    let subjects: string[] = [];
    for (let i = 0; i < 20 && !subjects.includes(`Run #${runId} approved`); i++) {
      subjects = (await api<{ messages: { subject: string }[] }>(author.page, '/auth/outbox')).messages.map((m) => m.subject);
      if (!subjects.includes(`Run #${runId} approved`)) await author.page.waitForTimeout(250);
    }
    expect(subjects).toContain(`Run #${runId} approved`);
    // A run estimated in well under a minute sends no "finished" e-mail (only runs over a minute do).
    expect(subjects).not.toContain(`Run #${runId} finished`);
    await author.context.close();
  });
});

describe('desk: compare, and no editing', () => {
  for (const [label, vp] of [
    ['wide', WIDE],
    ['phone', PHONE],
  ] as [string, Viewport][]) {
    it(`compares two nested runs (${label})`, async () => {
      const { context, page, errors } = await openPage(browser, vp);
      await signIn(page, 'desk');
      await page.goto('/runs');
      await page.getByText('Five harbour factors', { exact: false }).first().waitFor();
      await shot(page, `runs-list-${label}`);
      // the typed fallback is still there
      await page.getByLabel('Run A', { exact: true }).waitFor();
      // the Runs section links to its deep checks (the bottom bar stays at four destinations)
      await page.getByRole('navigation', { name: 'Runs pages' }).getByRole('link', { name: 'Deep checks', exact: true }).waitFor();
      if (label === 'wide') {
        // pick two runs in the list, then Compare
        await page.getByRole('checkbox', { name: `Pick run ${smallRunId} to compare` }).click();
        await expect(page.getByRole('button', { name: 'Compare (pick two runs)' }).getAttribute('aria-disabled')).resolves.toBe('true');
        await page.getByRole('checkbox', { name: `Pick run ${runId} to compare` }).click();
        await expect(page.getByRole('checkbox', { name: `Pick run ${runId} to compare` }).getAttribute('aria-checked')).resolves.toBe('true');
        await shot(page, `runs-picked-${label}`);
        await page.getByRole('button', { name: `Compare runs ${smallRunId} and ${runId}` }).click();
      } else {
        // from the run page: "Compare with…" lists the other finished runs on the same edition
        await page.goto(`/runs/${smallRunId}`);
        const others = page.getByRole('list', { name: 'Runs on the same edition' });
        await others.waitFor();
        await expect(others.getByRole('button', { name: `Compare with run ${smallRunId}` }).count()).resolves.toBe(0);
        await others.getByRole('button', { name: `Compare with run ${runId}` }).click();
      }
      await page.waitForURL(/\/runs\/compare\?/);
      await page.getByText(`drops SWELL from run #${runId}`, { exact: false }).waitFor();
      const cmp = await api<{ nested: { test: { stat: number } } }>(page, `/runs/compare?a=${smallRunId}&b=${runId}`);
      await expect(page.getByText(`χ² ${cmp.nested.test.stat.toFixed(3)}`, { exact: false }).count()).resolves.toBeGreaterThan(0);
      await shots(page, `compare-${label}`, 6);
      expect(errors).toEqual([]);
      await context.close();
    });
  }

  it('cannot edit a spec or start a run (the screen says so and the server refuses)', async () => {
    const { context, page } = await openPage(browser, WIDE);
    await signIn(page, 'desk');
    await page.goto(`/specs/${specId}`);
    await page.getByText('Your role reads specs and runs; it does not edit them.').waitFor();
    await expect(page.getByRole('button', { name: 'Save changes' }).count()).resolves.toBe(0);
    await shot(page, 'spec-desk-wide');
    await page.goto('/runs/new');
    await page.getByText('Not part of your role').waitFor();
    const put = await apiPost(page, `/specs/${specId}`, { name: 'desk was here' }, 'put');
    expect(put.status()).toBe(403);
    const post = await apiPost(page, '/runs', { specId });
    expect(post.status()).toBe(403);
    const comment = await apiPost(page, `/runs/${runId}/comments`, { text: 'hi' });
    expect(comment.status()).toBe(403);
    await context.close();
  });
});

// Last in this file: it adds 50-odd runs, which would push the runs the tests above look for off the table's first page.
describe('the runs list pages', () => {
  it('shows a page of 50 with the total, and "Show more" adds the next page (the API’s newest-first order)', async () => {
    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    const libs = (await api<{ libraries: { id: number; name: string; latestEdition: number }[] }>(page, '/libraries')).libraries;
    const lib = libs.find((l) => l.name.startsWith('Harbour market'))!;
    const ed = (await api<{ edition: { id: number; series: { name: string; kind: string }[] } }>(page, `/libraries/${lib.id}/editions/${lib.latestEdition}`)).edition;
    const assets = ed.series.filter((x) => x.kind === 'asset').map((x) => x.name).slice(0, 3);
    // enough runs for a second page (small, fast runs through the API)
    let total = (await api<{ total: number }>(page, '/runs?limit=1')).total;
    while (total <= 55) {
      const r = await apiPost(page, '/runs', { editionId: ed.id, spec: { assets, factors: ['TIDE'], nonTraded: [], rf: 'RF' } });
      expect(r.status(), await r.text()).toBe(201);
      total += 1;
    }
    const all = (await api<{ runs: { id: number }[]; total: number }>(page, '/runs?limit=500'));
    expect(all.total).toBe(total);
    await page.goto('/runs');
    const shown = page.getByRole('status', { name: 'Runs shown' });
    await expect.poll(() => shown.textContent()).toBe(`50 of ${total} runs`);
    await page.getByRole('button', { name: 'Show more' }).click();
    await expect.poll(() => shown.textContent()).toBe(`${Math.min(100, total)} of ${total} runs`);
    // the table's first rows are the API's newest runs, in its order
    const firstRow = page.getByRole('table', { name: 'Runs' }).getByRole('row').nth(1);
    await expect.poll(async () => (await firstRow.textContent()) ?? '').toContain(String(all.runs[0].id));
    await shot(page, 'runs-list-show-more-wide');
    expect(errors).toEqual([]);
    await context.close();
  });
});
