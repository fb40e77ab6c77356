/**
 * Deep checks end to end (real server with its worker pool + the web export, Debian Chromium):
 * a researcher opens a finished run of the demo library, starts a long bootstrap, watches its
 * progress bar move (aria-valuenow grows), cancels it; starts a subset sweep, lets it finish and
 * reads its result; a bootstrap with few draws finishes and its p-value table shows. The jobs list
 * shows the same jobs. Screenshots at 390×844 and 1280×800 (screenshots/deep-checks-*.png).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, shot, signIn } from './helpers';
import { expectChartDownloads, expectReadableChart, expectTablesFit } from './chart-checks';

/** How many deep checks the signed-in user sees on a run (through the API). */
async function jobCount(page: Page, runId: number): Promise<number> {
  return page.evaluate(async (id) => ((await (await fetch(`/api/v1/jobs?runId=${id}`)).json()) as { jobs: unknown[] }).jobs.length, runId);
}

/** Every rolling-window chart on the page reads: no overlapping label, dates at the bottom, a 0 tick, no "25.00". */
async function expectReadableRollingCharts(page: Page): Promise<number> {
  const charts = page.getByRole('img', { name: /^(b|λ \(% per period\)) of .+, by window$/ });
  const n = await charts.count();
  for (let i = 0; i < n; i++) await expectReadableChart(charts.nth(i), '0');
  return n;
}

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Creates a finished run on the demo library "Harbour market" through the API, as the signed-in user. */
async function demoRun(page: Page): Promise<number> {
  return page.evaluate(async () => {
    const j = async (r: Response) => {
      const body = await r.json();
      if (!r.ok) throw new Error(JSON.stringify(body));
      return body;
    };
    const { token } = await j(await fetch('/api/v1/auth/csrf'));
    const { libraries } = await j(await fetch('/api/v1/libraries'));
    const lib = libraries.find((l: { name: string }) => l.name.startsWith('Harbour market'));
    const { edition } = await j(await fetch(`/api/v1/libraries/${lib.id}/editions/${lib.latestEdition}`));
    const series = edition.series as { name: string; kind: string; traded: boolean }[];
    const assets = series.filter((s) => s.kind === 'asset').map((s) => s.name);
    const factors = series.filter((s) => s.kind === 'factor').map((s) => s.name);
    const nonTraded = series.filter((s) => s.kind === 'factor' && !s.traded).map((s) => s.name);
    const rf = series.find((s) => s.kind === 'rf')?.name;
    const { run } = await j(
      await fetch('/api/v1/runs', {
        method: 'POST',
        headers: { 'content-type': 'application/json', 'x-csrf-token': token },
        body: JSON.stringify({ editionId: edition.id, spec: { assets, factors, nonTraded, ...(rf ? { rf } : {}) } }),
      }),
    );
    if (run.status !== 'finished') throw new Error(`demo run ${run.status}: ${run.error}`);
    return run.id as number;
  });
}

async function progressNow(page: Page, name: RegExp): Promise<number> {
  const v = await page.getByRole('progressbar', { name }).getAttribute('aria-valuenow');
  return Number(v);
}

describe('deep checks in the browser', () => {
  it('starts, watches, cancels, finishes and reads deep checks on a demo run (wide)', async () => {
    const { page, requests, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    const runId = await demoRun(page);
    await page.goto(`/runs/${runId}`);
    const panel = page.getByRole('region', { name: 'Deep checks' });
    await panel.waitFor();

    // 1. a long bootstrap: the progress bar moves, then we cancel it
    await panel.getByRole('radio', { name: 'Bootstrap' }).click();
    // the form shows this server's limits (GET /jobs/limits; the test server has no queue workers)
    await panel.getByText(/at most 100,000 on this server/).waitFor();
    await panel.getByLabel('Draws', { exact: true }).fill('30000');
    await panel.getByLabel('Seed', { exact: true }).fill('11');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const bar = /^Bootstrap #\d+ progress$/;
    await panel.getByRole('progressbar', { name: bar }).waitFor();
    await expect.poll(() => progressNow(page, bar), { timeout: 60_000, interval: 250 }).toBeGreaterThan(0);
    const first = await progressNow(page, bar);
    await expect.poll(() => progressNow(page, bar), { timeout: 60_000, interval: 250 }).toBeGreaterThan(first);
    await expect.poll(async () => (await panel.getByText(/s left|min left/).count()) > 0, { timeout: 10_000 }).toBe(true);
    await panel.getByRole('progressbar', { name: bar }).scrollIntoViewIfNeeded();
    await shot(page, 'deep-checks-running-wide');
    // Cancel asks first; "Keep it running" keeps it running.
    await panel.getByRole('button', { name: /^Cancel Bootstrap #\d+ progress$/ }).click();
    const ask = panel.getByRole('alert', { name: /^Confirm cancelling Bootstrap #\d+$/ });
    await ask.waitFor();
    await shot(page, 'deep-checks-cancel-confirm-wide');
    await ask.getByRole('button', { name: /^Keep Bootstrap #\d+ running$/ }).click();
    await ask.waitFor({ state: 'detached' });
    await expect(panel.getByLabel('Job state: running').count()).resolves.toBeGreaterThan(0);
    await panel.getByRole('button', { name: /^Cancel Bootstrap #\d+ progress$/ }).click();
    await ask.getByRole('button', { name: /^Yes, cancel Bootstrap #\d+$/ }).click();
    await panel.getByLabel('Job state: cancelled').first().waitFor();
    await expect.poll(() => panel.getByRole('progressbar', { name: bar }).count()).toBe(0);
    await expect(panel.getByText(/No result is kept for a cancelled check/).count()).resolves.toBeGreaterThan(0);

    // 2. a subset sweep over the run's factors, started with a double click: one job, and it reads
    await panel.getByRole('radio', { name: 'Subset sweep' }).click();
    await panel.getByText('At most 15 here (32,767 models): this server runs deep checks without workers. The sweep takes at most 15 candidate factors without workers; 25 with queue workers.', { exact: false }).waitFor();
    const before = await jobCount(page, runId);
    await panel.getByRole('button', { name: 'Start deep check' }).dblclick();
    const showSweep = panel.getByRole('button', { name: /^Show result of Subset sweep #\d+$/ });
    await showSweep.waitFor({ timeout: 60_000 });
    await showSweep.click();
    const sweep = panel.getByLabel('Subset sweep result');
    await sweep.waitFor();
    await expect(sweep.getByText(/31 models estimated/).count()).resolves.toBe(1);
    await expect(sweep.getByRole('table', { name: 'Best models by HJ distance' }).getByRole('row').count()).resolves.toBeGreaterThan(5);
    await expect(sweep.getByText('How often each factor is among the best models').count()).resolves.toBe(1);
    expect(await jobCount(page, runId)).toBe(before + 1);
    await sweep.getByRole('table', { name: 'Best models by HJ distance' }).scrollIntoViewIfNeeded();
    await expectTablesFit(sweep, panel);
    await expectReadableChart(sweep.getByRole('img', { name: /^Factor frequency/ }), '0%');
    await expectChartDownloads(page, sweep, 'How often each factor is among the best models');
    await shot(page, 'deep-checks-sweep-wide');

    // 3. a short bootstrap finishes; its p-value table shows J and every factor
    await panel.getByRole('button', { name: /^Hide result/ }).click();
    await panel.getByRole('radio', { name: 'Bootstrap' }).click();
    await panel.getByLabel('Draws', { exact: true }).fill('199');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const showBoot = panel.getByRole('button', { name: /^Show result of Bootstrap #\d+$/ });
    await showBoot.waitFor({ timeout: 60_000 });
    await showBoot.click();
    const table = panel.getByRole('table', { name: 'Bootstrap p-values' });
    await table.waitFor();
    await expect(table.getByRole('row', { name: /^J \(df \d+\)$/ }).count()).resolves.toBe(1);
    await expect(table.getByRole('row', { name: /^drop / }).count()).resolves.toBe(5);
    await expect(panel.getByText(/199 of 199 draws used/).count()).resolves.toBe(1);
    await table.scrollIntoViewIfNeeded();
    await expectTablesFit(panel.getByLabel('Bootstrap result'), panel);
    await shot(page, 'deep-checks-bootstrap-wide');

    // 3b. a rolling window: its charts read at this width and download
    await panel.getByRole('button', { name: /^Hide result/ }).click();
    await panel.getByRole('radio', { name: 'Rolling window' }).click();
    await panel.getByLabel('Window length', { exact: true }).fill('240');
    await panel.getByLabel('Step', { exact: true }).fill('24');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const showRoll = panel.getByRole('button', { name: /^Show result of Rolling window #\d+$/ });
    await showRoll.waitFor({ timeout: 60_000 });
    await showRoll.click();
    await panel.getByRole('img', { name: /^b of .+, by window$/ }).first().waitFor();
    expect(await expectReadableRollingCharts(page)).toBeGreaterThan(0);
    await panel.getByRole('radio', { name: 'λ (priced?)' }).click();
    await panel.getByRole('img', { name: /^λ \(% per period\) of .+, by window$/ }).first().waitFor();
    expect(await expectReadableRollingCharts(page)).toBeGreaterThan(0);
    const firstChart = panel.getByRole('img', { name: /^λ \(% per period\) of .+, by window$/ }).first();
    await firstChart.scrollIntoViewIfNeeded();
    await shot(page, 'deep-checks-rolling-wide');
    const chartTitle = ((await firstChart.getAttribute('aria-label')) ?? '').replace(/, by window$/, ', rolling windows of 240');
    await expectChartDownloads(page, panel, chartTitle);

    // 4. the jobs list shows all three
    await panel.getByRole('link', { name: 'All deep checks' }).click();
    await page.waitForURL(/\/jobs$/);
    await page.getByRole('group', { name: /^Subset sweep #\d+$/ }).first().waitFor();
    await expect(page.getByLabel('Job state: cancelled').count()).resolves.toBeGreaterThan(0);
    await expect(page.getByLabel('Job state: finished').count()).resolves.toBeGreaterThanOrEqual(2);
    await shot(page, 'deep-checks-jobs-wide');
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await page.context().close();
  });

  it('phone: the panel, a rolling-window chart and the jobs list fit 390 px', async () => {
    const { page, requests, errors } = await openPage(browser, PHONE);
    await signIn(page, 'researcher');
    const runId = await demoRun(page);
    await page.goto(`/runs/${runId}`);
    const panel = page.getByRole('region', { name: 'Deep checks' });
    await panel.waitFor();
    await panel.getByRole('radio', { name: 'Rolling window' }).click();
    await panel.getByLabel('Window length', { exact: true }).fill('240');
    await panel.getByLabel('Step', { exact: true }).fill('60');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const show = panel.getByRole('button', { name: /^Show result of Rolling window #\d+$/ });
    await show.waitFor({ timeout: 60_000 });
    await show.click();
    await panel.getByRole('img', { name: /^b of .+, by window$/ }).first().waitFor();
    await panel.getByRole('img', { name: /^b of .+, by window$/ }).first().scrollIntoViewIfNeeded();
    await shot(page, 'deep-checks-rolling-phone');
    expect(await expectReadableRollingCharts(page)).toBeGreaterThan(0);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    expect(overflow).toBeLessThanOrEqual(1);

    // A subset sweep on the phone: no cell clipped, no name broken mid-word, nothing past the card.
    await panel.getByRole('button', { name: /^Hide result/ }).click();
    await panel.getByRole('radio', { name: 'Subset sweep' }).click();
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const showSweep = panel.getByRole('button', { name: /^Show result of Subset sweep #\d+$/ });
    await showSweep.waitFor({ timeout: 60_000 });
    await showSweep.click();
    const sweep = panel.getByLabel('Subset sweep result');
    await sweep.getByRole('table', { name: 'Best models by HJ distance' }).scrollIntoViewIfNeeded();
    await expectTablesFit(sweep, panel);
    await expectReadableChart(sweep.getByRole('img', { name: /^Factor frequency/ }), '0%');
    await shot(page, 'deep-checks-sweep-phone');
    await sweep.getByRole('img', { name: /^Factor frequency/ }).scrollIntoViewIfNeeded();
    await shot(page, 'deep-checks-sweep-freq-phone');
    expect(await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)).toBeLessThanOrEqual(1);
    await page.goto('/jobs');
    await page.getByRole('group', { name: /^Rolling window #\d+$/ }).first().waitFor();
    await shot(page, 'deep-checks-jobs-phone');
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await page.context().close();
  });
});
