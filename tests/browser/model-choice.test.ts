/**
 * Choosing among models in the browser (real server + web export, Debian Chromium): a researcher
 * compares two non-nested runs of the demo library "Harbour market" ({TIDE, SWELL} vs {TIDE,
 * BALLAST}, all traded, TIDE shared) and reads the squared-Sharpe test; both ledgers' b (t) and
 * λ % (t) are readable side by side at 1280 and 1600 px (issue 10 item 1: they rendered at zero
 * width); a nested pair shows the spanning test and why; a hold-out check (split, then rolling)
 * runs from the deep-checks panel and its chart reads. Phone 390×844 too. Screenshots in
 * test-results/screens/.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, signIn } from './helpers';
import { expectReadableChart, expectTablesFit } from './chart-checks';

const SCREENS = join(process.cwd(), 'test-results', 'screens');
async function screen(page: Page, name: string): Promise<void> {
  mkdirSync(SCREENS, { recursive: true });
  await page.evaluate(() => document.fonts.ready);
  await page.screenshot({ path: join(SCREENS, `${name}.png`), fullPage: true });
}

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Finished runs of the given factor sets on "Harbour market", created through the API as the signed-in user. */
async function demoRuns(page: Page, sets: string[][]): Promise<number[]> {
  return page.evaluate(async (factorSets) => {
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
    const rf = series.find((s) => s.kind === 'rf')?.name;
    const ids: number[] = [];
    for (const factors of factorSets) {
      const nonTraded = series.filter((s) => factors.includes(s.name) && !s.traded).map((s) => s.name);
      const { run } = await j(
        await fetch('/api/v1/runs', {
          method: 'POST',
          headers: { 'content-type': 'application/json', 'x-csrf-token': token },
          body: JSON.stringify({ editionId: edition.id, spec: { assets, factors, nonTraded, ...(rf ? { rf } : {}) } }),
        }),
      );
      if (run.status !== 'finished') throw new Error(`demo run ${run.status}: ${run.error}`);
      ids.push(run.id as number);
    }
    return ids;
  }, sets);
}

/** Every b (t) and λ (t) cell of a compare ledger: visible, wide enough for its text (nothing clipped). */
async function expectNumbersReadable(table: Locator): Promise<number> {
  const cells = await table.locator('[role="cell"]').evaluateAll((els) =>
    els
      .map((e) => ({ text: (e.textContent ?? '').trim(), w: e.getBoundingClientRect().width, sw: (e as HTMLElement).scrollWidth, cw: (e as HTMLElement).clientWidth }))
      .filter((c) => /\(\S+\)/.test(c.text)),
  );
  for (const c of cells) {
    expect(c.w, `width of "${c.text}"`).toBeGreaterThan(60);
    expect(c.sw, `"${c.text}" clipped`).toBeLessThanOrEqual(c.cw + 1);
  }
  return cells.length;
}

describe('choosing among models', () => {
  it('wide: compare two non-nested runs and read the test; b and λ side by side at 1280 and 1600; nested pair; hold-out check and its chart', async () => {
    const { page, requests, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    const [a, b, small] = await demoRuns(page, [
      ['TIDE', 'SWELL'],
      ['TIDE', 'BALLAST'],
      ['TIDE'],
    ]);
    await page.goto(`/runs/compare?a=${a}&b=${b}`);
    const test = page.getByLabel('Squared Sharpe ratio test');
    await test.waitFor();
    const said = (await test.innerText()).replace(/\s+/g, ' ');
    expect(said).toMatch(/θ A \d\.\d{4} \(se \d\.\d{4}\)/);
    expect(said).toMatch(/A − B −?\d\.\d{4} · se \d\.\d{4} · z −?\d+\.\d\d · p (< 0\.001|\d\.\d{3})/);
    expect(said).toMatch(/Both models contain TIDE/);
    expect(said).toMatch(/Barillas, Kan, Robotti and Shanken \(2020\)/);
    // the same numbers as the API
    const api = await page.evaluate(async (q) => (await (await fetch(`/api/v1/runs/compare?${q}`)).json()) as { sharpe: { z: number } }, `a=${a}&b=${b}`);
    expect(said).toContain(`z ${api.sharpe.z.toFixed(2).replace('-', '−')}`);
    for (const id of [a, b]) expect(await expectNumbersReadable(page.getByRole('table', { name: `Ledger of run ${id}` }))).toBe(4);
    const exportLinks = page.getByRole('link', { name: /^Export the comparison as (CSV|LaTeX)$/ });
    expect(await exportLinks.count()).toBe(2);
    expect(await exportLinks.first().getAttribute('href')).toBe(`/api/v1/runs/compare/export.csv?a=${a}&b=${b}`);
    await screen(page, 'compare-sharpe-wide-1280');
    await page.getByRole('table', { name: `Ledger of run ${a}` }).scrollIntoViewIfNeeded();
    await screen(page, 'compare-ledgers-wide-1280');
    await page.setViewportSize({ width: 1600, height: 1000 });
    await page.waitForTimeout(300);
    for (const id of [a, b]) expect(await expectNumbersReadable(page.getByRole('table', { name: `Ledger of run ${id}` }))).toBe(4);
    await page.getByRole('table', { name: `Ledger of run ${a}` }).scrollIntoViewIfNeeded();
    await screen(page, 'compare-ledgers-wide-1600');
    await page.setViewportSize(WIDE);

    // nested: the spanning test instead, and why
    await page.goto(`/runs/compare?a=${small}&b=${b}`);
    const span = page.getByLabel('Joint spanning test');
    await span.waitFor();
    const spanText = (await span.innerText()).replace(/\s+/g, ' ');
    expect(spanText).toMatch(/joint spanning test of BALLAST on TIDE replaces the z test/);
    expect(spanText).toMatch(/χ² \d+\.\d\d · df 1 · p/);
    expect(spanText).toMatch(/Why: .*nested/);
    await screen(page, 'compare-nested-wide');

    // hold-out check from the run page: a split at 70 %, then the rolling version with its chart
    await page.goto(`/runs/${a}`);
    const panel = page.getByRole('region', { name: 'Deep checks' });
    await panel.waitFor();
    await panel.getByRole('radio', { name: 'Hold-out check' }).click();
    await panel.getByLabel('Estimation fraction', { exact: true }).fill('0.7');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const showSplit = panel.getByRole('button', { name: /^Show result of Hold-out check #\d+$/ });
    await showSplit.first().waitFor({ timeout: 60_000 });
    await showSplit.first().click();
    const hold = panel.getByLabel('Hold-out result');
    await hold.waitFor();
    expect((await hold.innerText()).replace(/\s+/g, ' ')).toMatch(/R²_oos −?\d\.\d{3}/);
    const errs = hold.getByRole('table', { name: 'Hold-out pricing errors' });
    expect(await errs.getByRole('row').count()).toBeGreaterThan(5);
    await expectTablesFit(hold, panel);
    await errs.scrollIntoViewIfNeeded();
    await screen(page, 'holdout-split-wide');
    await panel.getByRole('button', { name: /^Hide result/ }).click();

    await panel.getByRole('radio', { name: 'rolling: window, then the next block' }).click();
    await panel.getByLabel('Window length', { exact: true }).fill('120');
    await panel.getByLabel('Step', { exact: true }).fill('24');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    await expect.poll(() => panel.getByRole('button', { name: /^Show result of Hold-out check #\d+$/ }).count(), { timeout: 60_000 }).toBe(2);
    await panel.getByRole('button', { name: /^Show result of Hold-out check #\d+$/ }).first().click();
    const roll = panel.getByLabel('Rolling hold-out result');
    await roll.waitFor();
    const chart = roll.getByRole('img', { name: /^R²_oos per block: / });
    await chart.waitFor();
    await expectReadableChart(chart, '0');
    await expectReadableChart(roll.getByRole('img', { name: /^mean \|α₂\| per block/ }), '0');
    expect((await roll.innerText()).replace(/\s+/g, ' ')).toMatch(/blocks: b re-estimated on each window of 120 periods, then the next 24 periods priced/);
    await chart.scrollIntoViewIfNeeded();
    await screen(page, 'holdout-rolling-wide');
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await page.context().close();
  });

  it('phone 390×844: the compare view and the hold-out chart fit, nothing spills past the screen', async () => {
    const { page, errors } = await openPage(browser, PHONE);
    await signIn(page, 'researcher');
    const [a, b] = await demoRuns(page, [
      ['TIDE', 'SWELL'],
      ['TIDE', 'BALLAST'],
    ]);
    await page.goto(`/runs/compare?a=${a}&b=${b}`);
    await page.getByLabel('Squared Sharpe ratio test').waitFor();
    await page.getByRole('list', { name: `Ledger of run ${a}` }).waitFor();
    expect(await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)).toBeLessThanOrEqual(1);
    await screen(page, 'compare-sharpe-phone');
    await page.getByRole('list', { name: `Ledger of run ${a}` }).scrollIntoViewIfNeeded();
    await screen(page, 'compare-ledgers-phone');
    await page.goto(`/runs/${a}`);
    const panel = page.getByRole('region', { name: 'Deep checks' });
    await panel.waitFor();
    await panel.getByRole('radio', { name: 'Hold-out check' }).click();
    await panel.getByRole('radio', { name: 'rolling: window, then the next block' }).click();
    await panel.getByLabel('Window length', { exact: true }).fill('120');
    await panel.getByLabel('Step', { exact: true }).fill('24');
    await panel.getByRole('button', { name: 'Start deep check' }).click();
    const show = panel.getByRole('button', { name: /^Show result of Hold-out check #\d+$/ });
    await show.waitFor({ timeout: 60_000 });
    await show.click();
    const chart = panel.getByRole('img', { name: /^R²_oos per block: / });
    await chart.waitFor();
    await expectReadableChart(chart, '0');
    await chart.scrollIntoViewIfNeeded();
    expect(await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)).toBeLessThanOrEqual(1);
    await screen(page, 'holdout-rolling-phone');
    expect(errors).toEqual([]);
    await page.context().close();
  });
});
