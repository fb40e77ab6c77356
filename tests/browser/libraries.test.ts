/**
 * Return libraries in the browser against the real server: an admin uploads a percent CSV,
 * reviews it (units, kinds), saves it private, shares it, adds edition 2 and downloads it; a
 * malformed file is refused with row and column; a researcher and a desk user see what their
 * roles allow. Screenshots at 390×844 and 1280×800 under screenshots/.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { readFileSync } from 'node:fs';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, shot, signIn } from './helpers';
import { chartLabels, expectChartDownloads, expectReadableChart } from './chart-checks';

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

const LIB_NAME = 'Breakwater test library';

const COLUMNS = ['Pier A', 'Pier B', 'Pier C', 'MOORING', 'RF'];

/** The cumulative-return chart reads at this size: no overlapping or clipped label, dates at the bottom, 0% when linear. */
async function expectReadableLibraryChart(page: Page): Promise<void> {
  const chart = page.getByRole('img', { name: /^Cumulative return chart/ });
  await chart.scrollIntoViewIfNeeded();
  const log = (await chartLabels(chart)).texts.some((t) => t.endsWith('\u00D7'));
  await expectReadableChart(chart, log ? null : '0%');
}

/** A small monthly CSV in percent: three portfolios, one traded factor, a bill rate (column names may change). */
function percentCsv(T: number, seed: number, names: readonly string[] = COLUMNS): string {
  let s = seed;
  const rnd = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648;
  };
  const lines = [['date', ...names].join(',')];
  for (let t = 0; t < T; t++) {
    const d = `${2010 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`;
    const f = (rnd() - 0.45) * 8;
    const row = [0.9, 1.1, 1.3].map((b) => (b * f + (rnd() - 0.5) * 2).toFixed(4));
    lines.push([d, ...row, f.toFixed(4), (0.1 + 0.05 * rnd()).toFixed(4)].join(','));
  }
  return `${lines.join('\n')}\n`;
}

async function pickFile(page: Page, name: string, body: string): Promise<void> {
  await page.getByLabel('CSV file').setInputFiles({ name, mimeType: 'text/csv', buffer: Buffer.from(body) });
}

describe('return libraries', () => {
  it('admin: upload → review → save private → share → edition 2 → download', async () => {
    const { context, page, requests, errors } = await openPage(browser, WIDE);
    await signIn(page, 'admin');
    await page.goto('/libraries');
    await page.getByRole('heading', { name: 'Return libraries', level: 1 }).waitFor();
    // Wide: the list beside the chosen library (the first one until another is picked); no page change.
    await page.getByRole('button', { name: 'Show library Harbour market (demo)' }).click();
    await expect(page.getByRole('button', { name: 'Show library Harbour market (demo)' }).getAttribute('aria-pressed')).resolves.toBe('true');
    const pane = page.getByRole('region', { name: 'Library Harbour market (demo)' });
    await pane.getByRole('heading', { name: 'Harbour market (demo)', level: 2 }).waitFor();
    await pane.getByRole('table', { name: 'Series' }).waitFor();
    expect(new URL(page.url()).pathname).toBe('/libraries');
    const [listBox, paneBox] = [await page.getByRole('list', { name: 'Libraries' }).boundingBox(), await pane.boundingBox()];
    expect(paneBox!.x).toBeGreaterThan(listBox!.x + listBox!.width - 1); // side by side
    await shot(page, 'libraries-list-wide');

    // A malformed file is refused with row and column, nothing saved.
    await page.getByRole('link', { name: 'Upload a library' }).click();
    await page.waitForURL(/\/libraries\/upload/);
    await pickFile(page, 'broken.csv', 'date,A,B\n2020-01,0.1,0.2\n2020-02,0.1,oops\n');
    await page.getByText('The file was refused; nothing was saved').waitFor();
    await expect(page.getByText('Row 3, column B: "oops" is not a number', { exact: false }).first().isVisible()).resolves.toBe(true);
    await shot(page, 'libraries-upload-refused-wide');

    // A good file in percent: review.
    await pickFile(page, 'breakwater.csv', percentCsv(48, 7));
    await page.getByRole('heading', { name: 'What Keelson read' }).waitFor();
    await expect(page.getByRole('radiogroup', { name: 'Values in the file are' }).getByRole('radio', { name: 'Percent (1 = 1%)' }).getAttribute('aria-checked')).resolves.toBe('true');
    await page.getByRole('radiogroup', { name: 'Kind of MOORING' }).getByRole('radio', { name: 'Factor', exact: true }).click();
    await page.getByRole('radiogroup', { name: 'Is MOORING traded' }).getByRole('radio', { name: 'Traded', exact: true }).click();
    await expect(page.getByRole('radiogroup', { name: 'Kind of RF' }).getByRole('radio', { name: 'Risk-free' }).getAttribute('aria-checked')).resolves.toBe('true');
    await page.getByLabel('Library name').fill(LIB_NAME);
    await shot(page, 'libraries-upload-review-wide');
    await page.getByRole('button', { name: 'Confirm and save' }).click();

    // Detail of edition 1, private.
    await page.waitForURL(/\/libraries\/\d+/);
    await page.getByRole('heading', { name: LIB_NAME, level: 1 }).waitFor();
    await page.getByRole('heading', { name: 'Edition 1' }).waitFor();
    await page.getByRole('table', { name: 'Series' }).waitFor();
    await expect(page.getByRole('table', { name: 'Series' }).getByText('Factor (traded)').isVisible()).resolves.toBe(true);
    await page.getByRole('img', { name: /Cumulative return chart: MOORING/ }).waitFor();
    await expectReadableLibraryChart(page);
    await expectChartDownloads(page, page.getByRole('main'), `${LIB_NAME}, edition 1: cumulative return`);
    // The series table sorts and filters.
    const table = page.getByRole('table', { name: 'Series' });
    await page.getByRole('button', { name: 'Sort by Mean' }).click();
    const dir = await table.getByRole('columnheader', { name: /Mean/ }).getAttribute('aria-sort');
    expect(['ascending', 'descending']).toContain(dir);
    const means = (await table.getByRole('row').evaluateAll((rows) => rows.slice(1).map((r) => r.querySelectorAll('[role=cell]')[4]?.textContent ?? '')))
      .map((x) => Number(x.replace('\u2212', '-')));
    const sorted = [...means].sort((p, q) => (dir === 'ascending' ? p - q : q - p));
    expect(means).toEqual(sorted);
    await page.getByLabel('Filter series').fill('Pier');
    await expect(table.getByRole('row').count()).resolves.toBe(4); // header + Pier A, B, C
    await table.scrollIntoViewIfNeeded();
    await shot(page, 'libraries-series-table-wide');
    await page.getByLabel('Filter series').fill('');

    // Share it: Keelson asks first; "Keep it private" changes nothing.
    await page.getByRole('button', { name: 'Share with the team' }).click();
    const ask = page.getByRole('alert', { name: 'Confirm sharing' });
    await ask.waitFor();
    await expect(ask.getByText(/researchers, reviewers and desk users/).isVisible()).resolves.toBe(true);
    await shot(page, 'libraries-share-confirm-wide');
    await ask.getByRole('button', { name: 'Keep it private' }).click();
    await ask.waitFor({ state: 'detached' });
    await expect(page.getByLabel('private', { exact: true }).first().isVisible()).resolves.toBe(true);
    await page.getByRole('button', { name: 'Share with the team' }).click();
    await ask.getByRole('button', { name: 'Yes, share it' }).click();
    await page.getByRole('button', { name: 'Stop sharing' }).waitFor();
    await expect(page.getByLabel('shared', { exact: true }).first().isVisible()).resolves.toBe(true);
    // …and undo it: stop sharing asks too, then the library is private again; share it once more for the other roles.
    await page.getByRole('button', { name: 'Stop sharing' }).click();
    const unask = page.getByRole('alert', { name: 'Confirm stop sharing' });
    await unask.waitFor();
    await shot(page, 'libraries-unshare-confirm-wide');
    await unask.getByRole('button', { name: 'Yes, stop sharing' }).click();
    await page.getByRole('button', { name: 'Share with the team' }).waitFor();
    await expect(page.getByLabel('private', { exact: true }).first().isVisible()).resolves.toBe(true);
    await page.getByRole('button', { name: 'Share with the team' }).click();
    await page.getByRole('alert', { name: 'Confirm sharing' }).getByRole('button', { name: 'Yes, share it' }).click();
    await page.getByRole('button', { name: 'Stop sharing' }).waitFor();
    await shot(page, 'libraries-detail-wide');

    // Edition 2.
    await page.getByRole('link', { name: 'Upload new edition' }).click();
    await page.waitForURL(/\/libraries\/upload\?libraryId=\d+/);
    await page.getByRole('heading', { name: `New edition of ${LIB_NAME}`, level: 1 }).waitFor();
    // Edition 2's file drops Pier C and brings Pier D: the kinds of edition 1 are kept, the change is listed.
    await pickFile(page, 'breakwater-2.csv', percentCsv(60, 11, ['Pier A', 'Pier B', 'Pier D', 'MOORING', 'RF']));
    const compared = page.getByLabel('Compared with the latest edition');
    await compared.waitFor();
    await expect(compared.getByLabel('New series').textContent()).resolves.toMatch(/Pier D$/);
    await expect(compared.getByLabel('Gone series').textContent()).resolves.toMatch(/Pier C — earlier editions keep them/);
    await expect(page.getByRole('radiogroup', { name: 'Kind of MOORING' }).getByRole('radio', { name: 'Factor', exact: true }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByRole('radiogroup', { name: 'Is MOORING traded' }).getByRole('radio', { name: 'Traded', exact: true }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByRole('radiogroup', { name: 'Kind of RF' }).getByRole('radio', { name: 'Risk-free' }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByLabel('Why MOORING is suggested as it is').textContent()).resolves.toBe('Kept from edition 1: factor (traded)');
    await expect(page.getByLabel('Pier D is new in this edition').isVisible()).resolves.toBe(true);
    await shot(page, 'libraries-edition2-review-wide');
    await page.getByRole('button', { name: 'Confirm new edition' }).click();
    await page.waitForURL(/\/libraries\/\d+\?edition=2/);
    await page.getByRole('heading', { name: 'Edition 2' }).waitFor();
    await expect(page.getByRole('listitem', { name: 'Edition 1' }).isVisible()).resolves.toBe(true);

    // Download edition 2 as CSV: decimals (percent divided by 100), 60 rows.
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download edition 2 as CSV' }).first().click()]);
    const csv = readFileSync((await download.path())!, 'utf8').trim().split('\n');
    expect(csv[0]).toBe('date,Pier A,Pier B,Pier D,MOORING,RF');
    expect(csv).toHaveLength(61);
    const rf = Number(csv[1]!.split(',')[5]);
    expect(rf).toBeGreaterThan(0.0009);
    expect(rf).toBeLessThan(0.0016);

    // Admins may delete an unused edition (not the last one).
    await expect(page.getByRole('table', { name: 'Series' }).getByText('Factor (traded)').isVisible()).resolves.toBe(true);
    await page.getByRole('button', { name: 'Delete edition 1' }).click();
    await page.getByRole('button', { name: 'Yes, delete edition 1' }).click();
    await page.getByRole('listitem', { name: 'Edition 1' }).waitFor({ state: 'detached' });
    await shot(page, 'libraries-edition2-wide');

    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('researcher on a phone: reads shared libraries, cannot share or archive them, uploads privately', async () => {
    const { context, page, requests, errors } = await openPage(browser, PHONE);
    await signIn(page, 'researcher');
    await page.goto('/libraries');
    await page.getByRole('link', { name: `Open library ${LIB_NAME}` }).waitFor();
    await shot(page, 'libraries-list-phone');
    await page.getByRole('link', { name: 'Open library Harbour market (demo)' }).click();
    await page.getByRole('heading', { name: 'Harbour market (demo)', level: 1 }).waitFor();
    await page.getByRole('heading', { name: 'Edition 1' }).waitFor();
    await page.getByRole('img', { name: /Cumulative return chart: TIDE/ }).waitFor();
    await expect(page.getByRole('button', { name: 'Share with the team' }).count()).resolves.toBe(0);
    await expect(page.getByRole('button', { name: 'Archive library' }).count()).resolves.toBe(0);
    await expect(page.getByRole('link', { name: 'Upload new edition' }).count()).resolves.toBe(0);
    await expect(page.getByRole('button', { name: /Delete edition/ }).count()).resolves.toBe(0);
    await shot(page, 'libraries-detail-phone');

    // Upload privately: sharing is not offered.
    await page.goto('/libraries/upload');
    await pickFile(page, 'mine.csv', percentCsv(24, 3));
    await page.getByRole('heading', { name: 'What Keelson read' }).waitFor();
    await expect(page.getByRole('radio', { name: 'The whole team (shared)' }).count()).resolves.toBe(0);
    await shot(page, 'libraries-upload-review-phone');
    await page.getByLabel('Library name').fill('Rhea scratch');
    await page.getByRole('radiogroup', { name: 'Kind of MOORING' }).getByRole('radio', { name: 'Factor', exact: true }).click();
    await page.getByRole('radiogroup', { name: 'Is MOORING traded' }).getByRole('radio', { name: 'Not traded', exact: true }).click();
    await page.getByRole('button', { name: 'Confirm and save' }).click();
    await page.getByRole('heading', { name: 'Rhea scratch', level: 1 }).waitFor();
    await expect(page.getByRole('button', { name: 'Archive library' }).isVisible()).resolves.toBe(true);
    await page.getByRole('img', { name: /Cumulative return chart: MOORING/ }).waitFor();
    await expectReadableLibraryChart(page);
    await shot(page, 'libraries-chart-phone');

    // Edition 2 on the phone keeps MOORING a non-traded factor and RF the risk-free rate.
    await page.getByRole('link', { name: 'Upload new edition' }).click();
    await page.waitForURL(/\/libraries\/upload\?libraryId=\d+/);
    await pickFile(page, 'mine-2.csv', percentCsv(36, 5));
    await page.getByLabel('Compared with the latest edition').waitFor();
    await expect(page.getByRole('radiogroup', { name: 'Kind of MOORING' }).getByRole('radio', { name: 'Factor', exact: true }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByRole('radiogroup', { name: 'Is MOORING traded' }).getByRole('radio', { name: 'Not traded', exact: true }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByRole('radiogroup', { name: 'Kind of RF' }).getByRole('radio', { name: 'Risk-free' }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByLabel('New series').textContent()).resolves.toMatch(/none$/);
    await shot(page, 'libraries-edition2-review-phone');
    await page.getByRole('button', { name: 'Confirm new edition' }).click();
    await page.waitForURL(/\/libraries\/\d+\?edition=2/);
    await page.getByRole('heading', { name: 'Edition 2' }).waitFor();
    await page.getByText('Factor (not traded)').first().waitFor();
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    expect(overflow).toBeLessThanOrEqual(1);
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });

  it("desk: reads shared libraries only, no upload, another's private library is not found", async () => {
    const { context, page, errors } = await openPage(browser, PHONE);
    await signIn(page, 'desk');
    await page.goto('/libraries');
    await page.getByRole('link', { name: `Open library ${LIB_NAME}` }).waitFor();
    await expect(page.getByRole('link', { name: 'Upload a library' }).count()).resolves.toBe(0);
    await expect(page.getByRole('link', { name: 'Open library Rhea scratch' }).count()).resolves.toBe(0);
    const privateId = await page.evaluate(async () => {
      const r = await fetch('/api/v1/libraries?q=Breakwater');
      return ((await r.json()) as { libraries: { id: number }[] }).libraries[0]!.id;
    });
    // The researcher's private library has the next id after the shared one; the desk gets the same answer as for nothing.
    await page.goto(`/libraries/${privateId + 1}`);
    await page.getByText('This library could not be opened').waitFor();
    await page.goto('/libraries/upload');
    await page.getByText('Not part of your role').waitFor();
    expect(errors).toEqual([]);
    await context.close();
  });
});
