/**
 * The upload review with 2,000 series (the most a library holds): the list is virtualised, so
 * only the rows in view are in the page; filtering finds the last series; its kind is set and
 * confirmed, and the saved edition's metadata has it. Phone (390×844) and wide (1280×800);
 * screenshots under test-results/screens/.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { ROOT } from '../../scripts/web-build';
import { MAX_COLUMNS } from '../../shared/libraries';
import { PHONE, WIDE, launchBrowser, openPage, signIn, type Viewport } from './helpers';

const SCREENS = join(ROOT, 'test-results', 'screens');
let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** A monthly decimal CSV of `n` series S0001…, T rows, values from a seeded LCG (invented data). */
function wideCsv(n: number, T: number): string {
  let x = 12345;
  const rnd = () => ((x = (x * 1103515245 + 12345) % 2147483648) / 2147483648);
  const names = Array.from({ length: n }, (_, i) => `S${String(i + 1).padStart(4, '0')}`);
  const lines = [['date', ...names].join(',')];
  for (let t = 0; t < T; t++) {
    const d = `${2015 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`;
    lines.push([d, ...names.map(() => ((rnd() - 0.48) * 0.1).toFixed(5))].join(','));
  }
  return `${lines.join('\n')}\n`;
}

async function shot(page: Page, name: string) {
  mkdirSync(SCREENS, { recursive: true });
  await page.evaluate(() => document.fonts.ready);
  await page.screenshot({ path: join(SCREENS, `${name}.png`) });
}

describe.each([
  ['phone', PHONE],
  ['wide', WIDE],
] as [string, Viewport][])('upload review of 2,000 series (%s)', (size, viewport) => {
  it('renders only the rows in view, finds the last series by filter, and saves its kind', async () => {
    const { context, page, errors } = await openPage(browser, viewport);
    await signIn(page, 'researcher');
    await page.goto('/libraries/upload');
    const csv = wideCsv(MAX_COLUMNS, 24);
    await page.getByLabel('CSV file').setInputFiles({ name: `wide-${size}.csv`, mimeType: 'text/csv', buffer: Buffer.from(csv) });
    const t0 = Date.now();
    await page.getByText(`2000 of 2000 kept`, { exact: false }).waitFor({ timeout: 60_000 });
    await page.getByRole('group', { name: 'Series S0001' }).waitFor();
    const renderMs = Date.now() - t0;
    const inPage = await page.locator('[role="group"][aria-label^="Series S"]').count();
    console.log(`[upload-review ${size}] review of ${MAX_COLUMNS} series on screen ${renderMs} ms after the file was picked (upload, parse and render); ${inPage} series rows in the page`);
    expect(inPage).toBeGreaterThan(0);
    expect(inPage).toBeLessThan(250); // virtualised: far fewer than 2,000
    await expect(page.getByRole('group', { name: 'Series S2000' }).count()).resolves.toBe(0);
    await shot(page, `upload-review-2000-${size}`);

    await page.getByLabel('Filter series', { exact: true }).fill('S2000');
    const last = page.getByRole('group', { name: 'Series S2000' });
    await last.waitFor();
    await page.getByRole('radiogroup', { name: 'Kind of S2000' }).getByRole('radio', { name: 'Factor', exact: true }).click();
    await page.getByRole('radiogroup', { name: 'Is S2000 traded' }).getByRole('radio', { name: 'Not traded', exact: true }).click();
    await page.getByLabel('Filter series', { exact: true }).fill('S1999');
    await page.getByRole('radiogroup', { name: 'Kind of S1999' }).getByRole('radio', { name: 'Factor', exact: true }).click();
    await page.getByLabel('Filter series', { exact: true }).fill('');
    await page.getByLabel('Library name', { exact: true }).fill(`Two thousand ${size}`);
    await shot(page, `upload-review-2000-filtered-${size}`);
    await page.getByRole('button', { name: 'Confirm and save' }).click();
    await page.waitForURL(/\/libraries\/\d+/, { timeout: 60_000 });
    const id = Number(new URL(page.url()).pathname.split('/').pop());
    const r = await page.request.get(`/api/v1/libraries/${id}/editions/1/meta`);
    expect(r.status()).toBe(200);
    const meta = ((await r.json()) as { meta: { series: { name: string; kind: string; traded: boolean }[] } }).meta;
    expect(meta.series).toHaveLength(MAX_COLUMNS);
    expect(meta.series.find((s) => s.name === 'S2000')).toEqual({ name: 'S2000', kind: 'factor', traded: false });
    expect(meta.series.find((s) => s.name === 'S1999')).toEqual({ name: 'S1999', kind: 'factor', traded: true });
    expect(meta.series.filter((s) => s.kind === 'asset')).toHaveLength(MAX_COLUMNS - 2);
    expect(errors).toEqual([]);
    await context.close();
  });
});
