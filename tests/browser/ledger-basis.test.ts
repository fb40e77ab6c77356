/**
 * The factor ledger's inference in the browser (real server + web export, Debian Chromium), on the
 * demo library "Harbour market" (invented data): standard and robust SE, t and p as the API gives
 * them (formatted by shared/format.ts), the basis named on chips, the first-stage copy of an
 * iterated run and the basis switch each creating a new run (the old one unchanged), the run's own
 * bootstrap showing a progress bar and then its p-values without a reload, the thin-beta column
 * ("no flag", or a flag in the row and the chip), Holm and BY adjusted p as columns on wide
 * screens and in the detail on phones, readable charts with downloads, and no ledger cell whose
 * text is cut (scrollWidth ≤ clientWidth). Viewports 390×844, 1024×768 (cards: the table does not fit),
 * 1280×800 and 1600×900; screenshots
 * under test-results/screens/.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import { ROOT } from '../../scripts/web-build';
import { formatFixed, formatP } from '../../shared/format';
import type { Run } from '../../shared/runs';
import { PHONE, SCREENSHOT_DIR, WIDE, apiPost, expectSameOrigin, harbourFiveFactors, launchBrowser, openPage, scrollShots, signIn, type Viewport } from './helpers';
import { expectChartDownloads, expectReadableChart, expectTablesFit } from './chart-checks';

const SCREENS = join(ROOT, 'test-results', 'screens');
const WIDER: Viewport = { width: 1600, height: 900 };

let browser: Browser;
/** First stage, W = I, joint drop set {SWELL, DRIFT}: robust basis by default. */
let firstId = 0;
/** Iterated GMM: no robust SEs; offers the first-stage copy. */
let iteratedId = 0;
/** Second stage on 2005–2020 (T = 192 < 10·N) with lag 14 (> 2·T^(1/3)): caution, lag warning, thin-beta flags. */
let shortId = 0;

/** Screenshots of the whole scrolling screen (helpers.ts scrollShots) under test-results/screens. */
const shots = (page: Page, name: string, max = 8) => scrollShots(page, name, { dir: SCREENS, max });

/** One screenshot of what is on screen now. */
async function shotNow(page: Page, name: string): Promise<void> {
  mkdirSync(SCREENS, { recursive: true });
  await page.evaluate(() => document.fonts.ready);
  await page.screenshot({ path: join(SCREENS, `${name}.png`) });
}

async function getRun(page: Page, id: number): Promise<Run> {
  const r = await page.request.get(`/api/v1/runs/${id}`);
  expect(r.status()).toBe(200);
  return ((await r.json()) as { run: Run }).run;
}

/** A finished run of the demo library's five-factor model with `extra` spec options, through the API. */
async function demoRun(page: Page, extra: Record<string, unknown>): Promise<Run> {
  const five = await harbourFiveFactors(page);
  const r = await apiPost(page, '/runs', { editionId: five.editionId, spec: { ...five.spec, ...extra } });
  expect(r.status(), await r.text()).toBe(201);
  const run = ((await r.json()) as { run: Run }).run;
  expect(run.status, run.error ?? '').toBe('finished');
  return run;
}

/** A cell's text without the significance marker (or its blank placeholder). */
const bare = async (l: Locator) => ((await l.textContent()) ?? '').replace(/[*\s]+$/, '').trim();

/** Elements inside `scope` whose text is wider than their box (the cut-off the checks forbid). */
async function clippedIn(scope: Locator): Promise<string[]> {
  return scope.evaluate((el) =>
    (Array.from(el.querySelectorAll('*')) as HTMLElement[])
      .filter((x) => x.clientWidth > 0 && x.scrollWidth > x.clientWidth + 0.5 && getComputedStyle(x).overflowX !== 'auto' && getComputedStyle(x).overflowX !== 'scroll')
      .map((x) => `${x.textContent ?? ''} (${x.scrollWidth} > ${x.clientWidth})`),
  );
}

beforeAll(async () => {
  browser = await launchBrowser();
  const { context, page } = await openPage(browser, WIDE);
  await signIn(page, 'researcher');
  firstId = (await demoRun(page, { stage: 'first', dropSet: ['SWELL', 'DRIFT'] })).id;
  iteratedId = (await demoRun(page, { stage: 'iterated' })).id;
  shortId = (await demoRun(page, { window: { start: '2005-01', end: '2020-12' }, lags: 14 })).id;
  await context.close();
});
afterAll(async () => {
  await browser?.close();
});

describe('wide ledger: standard and robust side by side, adjusted p, basis chips', () => {
  for (const [label, vp] of [
    ['1280', WIDE],
    ['1600', WIDER],
  ] as [string, Viewport][]) {
    it(`shows the API's SE, t and p on both bases and Holm/BY columns (${label} px)`, async () => {
      const { context, page, requests, errors } = await openPage(browser, vp);
      await signIn(page, 'researcher');
      await page.goto(`/runs/${firstId}`);
      const table = page.getByRole('table', { name: 'Factor ledger' });
      await table.waitFor();
      const run = await getRun(page, firstId);
      const r = run.result!;
      const level = r.options.level;
      expect(r.basis).toBe('robust');
      for (const f of r.factors) {
        const rob = f.robust!;
        expect(rob).not.toBeNull();
        const cell = (name: string) => table.getByRole('button', { name, exact: true });
        await expect(bare(cell(`standard se of b for ${f.name}`))).resolves.toBe(formatFixed(f.seB, 3));
        await expect(bare(cell(`robust se of b for ${f.name}`))).resolves.toBe(formatFixed(rob.seB, 3));
        await expect(bare(cell(`standard t of b for ${f.name}`))).resolves.toBe(formatFixed(f.tB, 2));
        await expect(bare(cell(`robust t of b for ${f.name}`))).resolves.toBe(formatFixed(rob.tB, 2));
        await expect(bare(cell(`standard p of b for ${f.name}`))).resolves.toBe(formatP(f.pB, { level }));
        await expect(bare(cell(`robust p of b for ${f.name}`))).resolves.toBe(formatP(rob.pB, { level }));
        await expect(bare(cell(`standard se of λ for ${f.name}`))).resolves.toBe(formatFixed(f.seLambda * 100, 3));
        await expect(bare(cell(`robust se of λ for ${f.name}`))).resolves.toBe(formatFixed(rob.seLambda * 100, 3));
        await expect(bare(cell(`robust p of λ for ${f.name}`))).resolves.toBe(formatP(rob.pLambda, { level }));
        // adjusted p as columns on wide screens
        await expect(cell(`Holm adjusted p of b for ${f.name}`).isVisible()).resolves.toBe(true);
        await expect(bare(cell(`Holm adjusted p of b for ${f.name}`))).resolves.toBe(formatP(f.pHolm, { level }));
        await expect(bare(cell(`BY adjusted p of b for ${f.name}`))).resolves.toBe(formatP(f.pBY, { level }));
        // the verdict chip names the basis
        const verdict = table.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` });
        await expect(verdict.textContent()).resolves.toContain('robust basis');
        // thin-beta column: words, not a bare number
        expect(f.thinBeta?.flag).toBe(false);
        await expect(cell(`thin-beta test of ${f.name}: no flag`).textContent()).resolves.toContain('no flag');
      }
      await expect(page.getByLabel('Verdict basis: robust').textContent()).resolves.toContain('verdicts on the robust basis');
      // the first-stage J names its weighting
      await expect(page.getByLabel('How J was computed').textContent()).resolves.toContain('First stage, W = I (identity)');
      // nothing cut off in the ledger, the drop-test table or the joint test
      expect(await clippedIn(table)).toEqual([]);
      const ledgerCard = page.getByRole('region', { name: 'Factor ledger' });
      await expectTablesFit(ledgerCard, ledgerCard);
      const tests = page.getByRole('table', { name: 'Drop tests and spanning checks' });
      expect(await clippedIn(tests)).toEqual([]);
      expect(await clippedIn(page.getByLabel('Joint drop test'))).toEqual([]);
      // the joint set: drop test p through formatP
      await expect(page.getByLabel('χ² drop test (common weighting)').textContent()).resolves.toContain(`p ${formatP(r.jointDrop!.chi2Drop!.p, { level })}`);
      await shots(page, `ledger-first-stage-wide-${label}`);

      // the detail of a b cell shows both bases and the adjusted p
      const tide = r.factors[0]!;
      await table.getByRole('button', { name: `b of ${tide.name}: what the test asks` }).click();
      const dialog = page.getByRole('dialog', { name: new RegExp(`for ${tide.name}$`) });
      await dialog.waitFor();
      await dialog.getByLabel(`robust standard error: ${formatFixed(tide.robust!.seB, 4)}`).waitFor();
      await dialog.getByLabel(`Holm adjusted p: ${formatP(tide.pHolm, { level })}`).waitFor();
      await shotNow(page, `ledger-detail-b-wide-${label}`);
      await dialog.getByRole('button', { name: 'Close' }).click();

      // charts: readable at this width, downloadable
      const charts = page.getByRole('region', { name: 'Charts' });
      for (const name of ['Predicted vs realised mean excess return, %', 'Pricing error per test asset, %', 'b per factor (needed?)', 'λ per factor, % (priced?)']) {
        const chart = charts.getByRole('img', { name, exact: true });
        await chart.scrollIntoViewIfNeeded();
        await expectReadableChart(chart, null);
      }
      mkdirSync(SCREENSHOT_DIR, { recursive: true }); // expectChartDownloads keeps the files there
      await expectChartDownloads(page, charts, 'b per factor (needed?)');
      expectSameOrigin(requests);
      expect(errors).toEqual([]);
      await context.close();
    });
  }
});

describe('phone ledger: cards, adjusted p behind the detail', () => {
  it('shows the API’s standard and robust SE per factor and Holm/BY in the detail (390 px)', async () => {
    const { context, page, requests, errors } = await openPage(browser, PHONE);
    await signIn(page, 'researcher');
    await page.goto(`/runs/${firstId}`);
    const list = page.getByRole('list', { name: 'Factor ledger' });
    await list.waitFor();
    const r = (await getRun(page, firstId)).result!;
    const level = r.options.level;
    // no Holm/BY column on phones
    await expect(page.getByRole('button', { name: /^Holm adjusted p of b for / }).count()).resolves.toBe(0);
    for (const f of r.factors) {
      const row = (basis: string, what: string) => list.getByRole('row', { name: `${basis} ${what} of ${f.name}`, exact: true }).getByRole('cell');
      await expect(bare(row('standard', 'b').nth(1))).resolves.toBe(formatFixed(f.seB, 3));
      await expect(bare(row('robust', 'b').nth(1))).resolves.toBe(formatFixed(f.robust!.seB, 3));
      await expect(bare(row('standard', 'b').nth(3))).resolves.toBe(formatP(f.pB, { level }));
      await expect(bare(row('robust', 'λ').nth(1))).resolves.toBe(formatFixed(f.robust!.seLambda * 100, 3));
      await expect(list.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` }).textContent()).resolves.toContain('robust basis');
      await expect(list.getByRole('button', { name: `thin β of ${f.name}: no flag` }).textContent()).resolves.toContain('no flag');
    }
    expect(await clippedIn(list)).toEqual([]);
    expect(await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)).toBeLessThanOrEqual(1);
    await shots(page, 'ledger-first-stage-phone', 14);

    const f = r.factors[1]!;
    await list.getByRole('button', { name: `b of ${f.name}: what the test asks` }).click();
    const dialog = page.getByRole('dialog', { name: new RegExp(`for ${f.name}$`) });
    await dialog.waitFor();
    await dialog.getByLabel(`Holm adjusted p: ${formatP(f.pHolm, { level })}`).waitFor();
    await dialog.getByLabel(`BY adjusted p: ${formatP(f.pBY, { level })}`).waitFor();
    await expect(dialog.getByLabel(`Holm adjusted p: ${formatP(f.pHolm, { level })}`).isVisible()).resolves.toBe(true);
    expect(await clippedIn(dialog)).toEqual([]);
    await shotNow(page, 'ledger-detail-b-phone');
    await dialog.getByRole('button', { name: 'Close' }).click();
    // the verdict detail shows every basis and the caution where a user acts on it
    await list.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` }).click();
    const vd = page.getByRole('dialog', { name: new RegExp(`^Verdict for ${f.name}$`) });
    await vd.waitFor();
    await vd.getByLabel(`robust basis: ${f.verdicts.robust}`).waitFor();
    await expect(vd.getByText('Results are statistical evidence, not investment advice.').isVisible()).resolves.toBe(true);
    await shotNow(page, 'ledger-detail-verdict-phone');
    await vd.getByRole('button', { name: 'Close' }).click();

    // the Fama–MacBeth numbers stay on one line each ("< 0.001" not split into "<" and "0.001")
    const fm = page.getByRole('table', { name: 'Fama–MacBeth premia' });
    await fm.scrollIntoViewIfNeeded();
    const wrapped = await fm.evaluate((el) =>
      (Array.from(el.querySelectorAll('[role=cell]')) as HTMLElement[])
        .filter((c) => c.getBoundingClientRect().height > 1.9 * parseFloat(getComputedStyle(c).fontSize))
        .map((c) => c.textContent ?? ''),
    );
    expect(wrapped).toEqual([]);
    expect(await clippedIn(fm)).toEqual([]);
    await shotNow(page, 'ledger-fama-macbeth-phone');

    const charts = page.getByRole('region', { name: 'Charts' });
    for (const name of ['Predicted vs realised mean excess return, %', 'Pricing error per test asset, %', 'b per factor (needed?)', 'λ per factor, % (priced?)']) {
      const chart = charts.getByRole('img', { name, exact: true });
      await chart.scrollIntoViewIfNeeded();
      await expectReadableChart(chart, null);
    }
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('mid-width ledger: cards where the table does not fit', () => {
  // 1024 px with the side bar leaves less room than the table's columns need (≈ 950 px with the
  // robust group): the factors show as cards (as on a phone), and nothing in the ledger scrolls sideways.
  it('shows the factor cards with the API’s numbers and no sideways scrolling (1024×768)', async () => {
    const { context, page, errors } = await openPage(browser, { width: 1024, height: 768 });
    await signIn(page, 'researcher');
    await page.goto(`/runs/${firstId}`);
    const list = page.getByRole('list', { name: 'Factor ledger' });
    await list.waitFor();
    await expect(page.getByRole('table', { name: 'Factor ledger' }).count()).resolves.toBe(0);
    const r = (await getRun(page, firstId)).result!;
    const level = r.options.level;
    for (const f of r.factors) {
      const row = (basis: string, what: string) => list.getByRole('row', { name: `${basis} ${what} of ${f.name}`, exact: true }).getByRole('cell');
      await expect(bare(row('standard', 'b').nth(1))).resolves.toBe(formatFixed(f.seB, 3));
      await expect(bare(row('robust', 'b').nth(3))).resolves.toBe(formatP(f.robust!.pB, { level }));
    }
    const sideways = await list.evaluate((el) => {
      const all = [el, ...(Array.from(el.querySelectorAll('*')) as HTMLElement[])] as HTMLElement[];
      return all.filter((x) => x.clientWidth > 0 && x.scrollWidth > x.clientWidth + 0.5).map((x) => `${(x.textContent ?? '').slice(0, 40)} (${x.scrollWidth} > ${x.clientWidth})`);
    });
    expect(sideways).toEqual([]);
    expect(await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth)).toBeLessThanOrEqual(1);
    await list.scrollIntoViewIfNeeded();
    await shotNow(page, 'ledger-first-stage-1024');
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('new runs from a finished run', () => {
  it('makes a first-stage copy of an iterated run in one click (wide), and says why robust SEs are missing (phone)', async () => {
    const phone = await openPage(browser, PHONE);
    await signIn(phone.page, 'researcher');
    await phone.page.goto(`/runs/${iteratedId}`);
    await phone.page.getByLabel('Why robust SEs are not shown').waitFor();
    const it0 = (await getRun(phone.page, iteratedId)).result!;
    await expect(phone.page.getByLabel('Why robust SEs are not shown').textContent()).resolves.toBe(it0.robustNote);
    await expect(phone.page.getByLabel('Iterations').textContent()).resolves.toContain(`Converged after ${it0.iterations} iterations`);
    await shots(phone.page, 'ledger-iterated-phone', 4);
    expect(phone.errors).toEqual([]);
    await phone.context.close();

    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    await page.goto(`/runs/${iteratedId}`);
    const copy = page.getByRole('button', { name: `Make a first-stage copy of run ${iteratedId}` });
    await copy.waitFor();
    await shots(page, 'ledger-iterated-wide', 3);
    // a double click still makes one copy (the button waits for its POST)
    const before = ((await (await page.request.get('/api/v1/runs?limit=500')).json()) as { runs: unknown[] }).runs.length;
    const posted = page.waitForRequest((q) => q.method() === 'POST' && q.url().endsWith(`/runs/${iteratedId}/first-stage-copy`));
    await copy.dblclick();
    // one key per press: a repeated request would get the first answer, not a second copy
    expect((await posted).headers()['idempotency-key']).toMatch(/^[0-9a-f]{32}$/);
    await page.waitForURL((u) => /\/runs\/\d+$/.test(u.pathname) && u.pathname !== `/runs/${iteratedId}`);
    const newId = Number(new URL(page.url()).pathname.split('/').pop());
    await page.getByRole('table', { name: 'Factor ledger' }).waitFor();
    const made = await getRun(page, newId);
    expect(made.spec.stage).toBe('first');
    expect(made.result!.basis).toBe('robust');
    expect(made.result!.factors.every((f) => f.robust !== null)).toBe(true);
    await expect(page.getByLabel('Verdict basis: robust').count()).resolves.toBe(1);
    const after = ((await (await page.request.get('/api/v1/runs?limit=500')).json()) as { runs: unknown[] }).runs.length;
    expect(after).toBe(before + 1);
    // the iterated run is unchanged
    expect((await getRun(page, iteratedId)).result).toEqual(it0);
    await shotNow(page, 'ledger-first-stage-copy-wide');
    expect(errors).toEqual([]);
    await context.close();
  });

  it('switches the basis by starting a new run; the finished run stays as it was (wide)', async () => {
    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    await page.goto(`/runs/${firstId}`);
    const card = page.getByRole('region', { name: 'Basis of the verdicts' });
    await card.waitFor();
    await expect(card.getByText(`run #${firstId} itself stays as it is`, { exact: false }).count()).resolves.toBe(1);
    await expect(card.getByText('Results are statistical evidence, not investment advice.').isVisible()).resolves.toBe(true);
    await expect(card.getByRole('button', { name: 'The robust basis: this run' }).getAttribute('aria-disabled')).resolves.toBe('true');
    await card.scrollIntoViewIfNeeded();
    await shotNow(page, 'ledger-basis-switcher-wide');
    const old = await getRun(page, firstId);
    const posted = page.waitForRequest((q) => q.method() === 'POST' && q.url().endsWith(`/runs/${firstId}/basis`));
    await card.getByRole('button', { name: 'Start a new run on the standard basis' }).click();
    expect((await posted).headers()['idempotency-key']).toMatch(/^[0-9a-f]{32}$/);
    expect((await posted).postDataJSON()).toEqual({ basis: 'standard' });
    await page.waitForURL((u) => /\/runs\/\d+$/.test(u.pathname) && u.pathname !== `/runs/${firstId}`);
    const newId = Number(new URL(page.url()).pathname.split('/').pop());
    await page.getByLabel('Verdict basis: standard').waitFor();
    const made = await getRun(page, newId);
    expect(made.result!.basis).toBe('standard');
    expect(made.result!.verdictBasis).toBe('standard');
    const table = page.getByRole('table', { name: 'Factor ledger' });
    for (const f of made.result!.factors) await expect(table.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` }).textContent()).resolves.toContain('standard basis');
    expect((await getRun(page, firstId)).result).toEqual(old.result);
    await shots(page, 'ledger-standard-basis-wide', 2);
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('the run’s own bootstrap', () => {
  it('shows a progress bar, then the bootstrap p-values without a reload (wide), and the same values on a phone', async () => {
    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    const boot = await demoRun(page, { stage: 'first', basis: 'bootstrap', bootstrap: { draws: 6000, seed: 7 }, dropSet: ['SWELL', 'DRIFT'] });
    expect(boot.bootstrapJobId).not.toBeNull();
    await page.goto(`/runs/${boot.id}`);
    const bar = page.getByRole('region', { name: 'Factor ledger' }).getByRole('progressbar', { name: /^Bootstrap #\d+ progress$/ });
    await bar.waitFor();
    const table = page.getByRole('table', { name: 'Factor ledger' });
    await expect(bare(table.getByRole('button', { name: 'bootstrap p of b for TIDE', exact: true }))).resolves.toBe('pending');
    // until the bootstrap arrives the verdicts rest on the robust basis, and the page says so
    await expect(page.getByLabel('Verdict basis: robust').count()).resolves.toBe(1);
    await bar.scrollIntoViewIfNeeded();
    await shotNow(page, 'ledger-bootstrap-running-wide');
    // the values arrive without a reload
    await page.getByLabel('Verdict basis: bootstrap').waitFor({ timeout: 150_000 });
    await expect(bar.count()).resolves.toBe(0);
    const done = await getRun(page, boot.id);
    const r = done.result!;
    const level = r.options.level;
    expect(r.bootstrap).not.toBeNull();
    for (const f of r.factors) {
      await expect(bare(table.getByRole('button', { name: `bootstrap p of b for ${f.name}`, exact: true }))).resolves.toBe(formatP(f.bootstrap!.pB, { level }));
      await expect(bare(table.getByRole('button', { name: `bootstrap p of λ for ${f.name}`, exact: true }))).resolves.toBe(formatP(f.bootstrap!.pLambda, { level }));
      await expect(table.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` }).textContent()).resolves.toContain('bootstrap basis');
      const drop = page.getByRole('table', { name: 'Drop tests and spanning checks' }).getByRole('cell', { name: `bootstrap drop p of ${f.name}`, exact: true });
      await expect(bare(drop)).resolves.toBe(formatP(f.bootstrap!.pDrop, { level }));
    }
    await expect(page.getByLabel('χ² drop test (common weighting)').textContent()).resolves.toContain(`bootstrap p ${formatP(r.bootstrap!.pJointDrop, { level })}`);
    await expect(page.getByLabel('Wald test on b (jointly zero)').textContent()).resolves.toContain(`bootstrap p ${formatP(r.bootstrap!.pJointWald, { level })}`);
    await expect(page.getByText(`bootstrap p ${formatP(r.bootstrap!.pJ, { level })}`, { exact: false }).count()).resolves.toBeGreaterThan(0);
    expect(await clippedIn(table)).toEqual([]);
    await shots(page, 'ledger-bootstrap-done-wide', 3);
    expect(errors).toEqual([]);
    await context.close();

    const phone = await openPage(browser, PHONE);
    await signIn(phone.page, 'researcher');
    await phone.page.goto(`/runs/${boot.id}`);
    const list = phone.page.getByRole('list', { name: 'Factor ledger' });
    await list.waitFor();
    for (const f of r.factors) {
      const cells = list.getByRole('row', { name: `bootstrap b of ${f.name}`, exact: true }).getByRole('cell');
      await expect(bare(cells.nth(3))).resolves.toBe(formatP(f.bootstrap!.pB, { level }));
    }
    expect(await clippedIn(list)).toEqual([]);
    await shots(phone.page, 'ledger-bootstrap-done-phone', 4);
    expect(phone.errors).toEqual([]);
    await phone.context.close();
  });
});

describe('cautions and the thin-beta flag', () => {
  for (const [label, vp] of [
    ['wide', WIDE],
    ['phone', PHONE],
  ] as [string, Viewport][]) {
    it(`shows the small-sample caution, the lag warning and flagged factors unmistakably (${label})`, async () => {
      const { context, page, errors } = await openPage(browser, vp);
      await signIn(page, 'researcher');
      await page.goto(`/runs/${shortId}`);
      const r = (await getRun(page, shortId)).result!;
      expect(r.caution).not.toBeNull();
      expect(r.lagWarning).not.toBeNull();
      await page.getByLabel('Caution about the verdicts').waitFor();
      await expect(page.getByLabel('Caution about the verdicts').textContent()).resolves.toContain(r.caution!);
      await expect(page.getByLabel('Caution about J').textContent()).resolves.toContain(r.caution!);
      await expect(page.getByLabel('Lag warning').textContent()).resolves.toContain(r.lagWarning!);
      const flagged = r.factors.filter((f) => f.thinBeta?.flag);
      // The demo data over 2005–2020 with lag 14: the HAC Wald tests of 25 covariances do not reject (values from this run's API answer).
      expect(flagged.length).toBeGreaterThan(0);
      const scope = label === 'wide' ? page.getByRole('table', { name: 'Factor ledger' }) : page.getByRole('list', { name: 'Factor ledger' });
      for (const f of flagged) {
        const verdict = scope.getByRole('button', { name: `Verdict for ${f.name}: ${f.verdict}` });
        await expect(verdict.textContent()).resolves.toContain('thin β: unreliable');
        const thin = scope.getByRole('button', { name: label === 'wide' ? `thin-beta test of ${f.name}: flagged` : `thin β of ${f.name}: flagged` });
        await expect(thin.textContent()).resolves.toContain('FLAGGED');
      }
      expect(await clippedIn(scope)).toEqual([]);
      await shots(page, `ledger-cautions-${label}`, label === 'wide' ? 4 : 10);
      expect(errors).toEqual([]);
      await context.close();
    });
  }
});
