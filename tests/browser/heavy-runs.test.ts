/**
 * A large run in the browser (real web export, Debian Chromium): a researcher starts a saved spec
 * whose cost T·N²·K is above the heavy-run threshold; the run page says it is being estimated, for
 * how long, and offers to cancel it; the ledger replaces that view without a reload when the
 * estimate arrives. A second run is cancelled from its page (asked first) and shows as cancelled;
 * a reviewer sees a pending run without the cancel button.
 *
 * This file runs its own in-process server (createApp on an in-memory database with the demo users
 * and libraries, serving dist/) whose deep-check pool holds every task until the test releases it
 * (tests/api/helpers.ts holdingPool), so the pending view stays on screen as long as needed. The
 * released estimate is the real one (estimateRun on the held input), and the ledger on screen is
 * compared with the API's. Screenshots at 390×844 and 1280×800: test-results/screens/heavy-run-*.png.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { ROOT } from '../../scripts/web-build';
import { openDb, type Db } from '../../server/db/client';
import { createApp, type KeelsonApp } from '../../server/app';
import { createMailer, type Mailer } from '../../server/services/mailer';
import { seedDemoUsers } from '../../server/seed/users';
import { seedDemoLibraries } from '../../server/seed/demo-libraries';
import { mailSettled } from '../../server/services/runs';
import { estimateRun } from '../../server/services/run-estimate';
import { holdingPool, type HeldTask } from '../api/helpers';
import { isShared } from '../../server/jobs/shared-input';
import type { Run } from '../../shared/runs';
import { PHONE, WIDE, apiPost, harbourFiveFactors, launchBrowser, openPage, signIn } from './helpers';

const SCREENS = join(ROOT, 'test-results', 'screens');
const { pool, held } = holdingPool(1);
let db: Db;
let mailer: Mailer;
let app: KeelsonApp;
let server: Server;
let base: string;
let browser: Browser;

beforeAll(async () => {
  db = openDb(':memory:');
  await seedDemoUsers(db);
  seedDemoLibraries(db);
  mailer = await createMailer();
  // the demo five-factor model (T = 600, N = 25, K = 5) costs 1.9·10⁶: above this threshold
  app = createApp({ db, mailer, sessionSecret: 'browser-heavy-secret-0123456789', webDist: join(ROOT, 'dist'), heavyRunCost: 1_000_000, jobPool: pool });
  server = app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', () => r()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await new Promise<void>((r) => (server ? server.close(() => r()) : r()));
  await mailSettled();
  app?.close();
  await app?.closed();
  await mailer?.close();
  db?.$client.close();
});

async function shot(page: Page, name: string): Promise<void> {
  mkdirSync(SCREENS, { recursive: true });
  await page.evaluate(() => document.fonts.ready);
  await page.screenshot({ path: join(SCREENS, `${name}.png`), fullPage: true });
}

/** A saved spec of the demo library's five-factor model, through the API. @returns its id. */
async function fiveFactorSpec(page: Page): Promise<number> {
  const { editionId, spec } = await harbourFiveFactors(page);
  const r = await apiPost(page, '/specs', { name: 'Five factors, all assets', editionId, spec });
  expect(r.status(), await r.text()).toBe(201);
  return ((await r.json()) as { spec: { id: number } }).spec.id;
}

/** Presses "Start run" on the spec page; waits for the run page. @returns the run id. */
async function startFromSpec(page: Page, specId: number): Promise<number> {
  await page.goto(`/specs/${specId}`);
  await page.getByRole('button', { name: 'Start run', exact: true }).click();
  await page.waitForURL(/\/runs\/\d+$/);
  return Number(/\/runs\/(\d+)$/.exec(page.url())![1]);
}

async function heldFor(count: number): Promise<HeldTask> {
  for (let i = 0; held.length < count; i++) {
    if (i > 2000) throw new Error('the estimation never reached the pool');
    await new Promise((r) => setTimeout(r, 10));
  }
  const entry = held[count - 1];
  expect(entry.task.op).toBe('estimate');
  return entry;
}

describe('a large run in the browser', () => {
  let specId = 0;

  it('shows the run being estimated, then its ledger without a reload (phone and wide)', async () => {
    const phone = await openPage(browser, PHONE, base);
    const wide = await openPage(browser, WIDE, base);
    try {
      await signIn(phone.page, 'researcher');
      specId = await fiveFactorSpec(phone.page);
      const runId = await startFromSpec(phone.page, specId);
      const entry = await heldFor(1);

      const pending = phone.page.getByRole('progressbar', { name: 'Run running' });
      await pending.waitFor();
      await expect.poll(() => pending.textContent()).toMatch(/Estimating on a worker.*Running for \d+ s\. This page updates by itself/);
      await phone.page.getByRole('button', { name: `Cancel run #${runId}` }).waitFor();
      await shot(phone.page, 'heavy-run-running-phone');

      await signIn(wide.page, 'researcher', { next: `/runs/${runId}` });
      await wide.page.getByRole('progressbar', { name: 'Run running' }).waitFor();
      await shot(wide.page, 'heavy-run-running-wide');

      // the estimate arrives: the real one, on the input the server handed to its pool
      const held = (entry.task as Extract<HeldTask['task'], { op: 'estimate' }>).task;
      if (isShared(held)) throw new Error('the embedded pool was handed a shared input: it passes the plain one');
      entry.release(estimateRun(held));
      for (const p of [phone.page, wide.page]) {
        await p.getByLabel('Factor ledger').first().waitFor();
        await p.getByLabel('Run finished').waitFor();
        expect(await p.getByRole('progressbar', { name: 'Run running' }).count()).toBe(0);
      }
      const run = ((await (await wide.page.request.get(`/api/v1/runs/${runId}`)).json()) as { run: Run }).run;
      expect(run.status).toBe('finished');
      const ledgerText = (await wide.page.getByLabel('Factor ledger').first().textContent()) ?? '';
      for (const f of run.result!.factors) expect(ledgerText).toContain(f.name);
      await shot(wide.page, 'heavy-run-finished-wide');
      expect(phone.errors).toEqual([]);
      expect(wide.errors).toEqual([]);
    } finally {
      await phone.context.close();
      await wide.context.close();
    }
  });

  it('cancels a pending run from its page after asking; a reviewer sees no cancel button', async () => {
    const phone = await openPage(browser, PHONE, base);
    const review = await openPage(browser, WIDE, base);
    try {
      await signIn(phone.page, 'researcher');
      const runId = await startFromSpec(phone.page, specId);
      const entry = await heldFor(2);
      await phone.page.getByRole('progressbar', { name: 'Run running' }).waitFor();

      await signIn(review.page, 'reviewer', { next: `/runs/${runId}` });
      await review.page.getByRole('progressbar', { name: 'Run running' }).waitFor();
      expect(await review.page.getByRole('button', { name: `Cancel run #${runId}` }).count()).toBe(0);

      await phone.page.getByRole('button', { name: `Cancel run #${runId}` }).click();
      await phone.page.getByRole('alert', { name: `Confirm cancelling run #${runId}` }).waitFor();
      await shot(phone.page, 'heavy-run-cancel-confirm-phone');
      expect(entry.aborted).toBe(false); // nothing happens before the answer
      await phone.page.getByRole('button', { name: `Yes, cancel run #${runId}` }).click();
      await phone.page.getByLabel('Run cancelled', { exact: true }).waitFor();
      await expect.poll(() => phone.page.getByLabel('Run cancelled notice').textContent()).toMatch(/^Cancelled by Rhea Tolland\. It was stopped \d{4}-\d\d-\d\d \d\d:\d\d UTC, before it was estimated, so it has no ledger/);
      expect(entry.aborted).toBe(true);
      expect(await phone.page.getByRole('progressbar').count()).toBe(0);
      await shot(phone.page, 'heavy-run-cancelled-phone');

      // the reviewer's page follows by itself
      await review.page.getByLabel('Run cancelled', { exact: true }).waitFor();
      await shot(review.page, 'heavy-run-cancelled-wide');
      expect(phone.errors).toEqual([]);
      expect(review.errors).toEqual([]);
    } finally {
      await phone.context.close();
      await review.context.close();
    }
  });
});
