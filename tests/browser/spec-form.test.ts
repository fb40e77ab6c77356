/**
 * The spec form and the specs screens at phone (390×844) and wide (1280×800) sizes, on the demo
 * library (Harbour market: 25 test assets, factors TIDE SWELL DRIFT GALE BALLAST, risk-free RF):
 * the risk-free default, the basis and bootstrap fields, the N < K refusal with nothing saved,
 * a double-click on "Save spec and run" making one spec and one run (Idempotency-Key sent),
 * "not found" for bad spec ids, and archiving from the specs list. Screenshots go to
 * test-results/screens/ and are looked at by hand.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { ROOT } from '../../scripts/web-build';
import { FEWER_ASSETS_THAN_FACTORS } from '../../shared/specs';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, scrollShots, signIn, apiPost, type Viewport } from './helpers';

const SCREENS = join(ROOT, 'test-results', 'screens');
const SIZES: [string, Viewport][] = [
  ['phone', PHONE],
  ['wide', WIDE],
];

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Screenshot of the viewport, then of each further screenful (helpers.ts scrollShots, from the top). */
const screens = (page: Page, name: string, max = 6) => scrollShots(page, name, { dir: SCREENS, max, fromTop: true });

async function apiGet<T>(page: Page, path: string): Promise<T> {
  const r = await page.request.get(`/api/v1${path}`);
  expect(r.status(), path).toBe(200);
  return (await r.json()) as T;
}
/** Edition id of the demo Harbour market's latest edition. */
async function harbourEdition(page: Page): Promise<number> {
  const libs = (await apiGet<{ libraries: { id: number; name: string }[] }>(page, '/libraries')).libraries;
  const lib = libs.find((l) => l.name === 'Harbour market (demo)')!;
  return (await apiGet<{ library: { editions: { id: number }[] } }>(page, `/libraries/${lib.id}`)).library.editions[0]!.id;
}
const countSpecs = async (page: Page) => (await apiGet<{ specs: unknown[] }>(page, '/specs?archived=true')).specs.length;
const countRuns = async (page: Page) => (await apiGet<{ runs: unknown[] }>(page, '/runs?limit=500')).runs.length;

async function pickDemo(page: Page) {
  await page.goto('/runs/new');
  await page.getByRole('radio', { name: 'Harbour market (demo)' }).click();
  await page.getByRole('group', { name: 'Test assets' }).waitFor();
}

describe.each(SIZES)('spec form (%s)', (size, viewport) => {
  it('defaults the risk-free series to the library’s RF, shows the resolved basis, and offers bootstrap and covariance-weighting settings', async () => {
    const { context, page, requests, errors } = await openPage(browser, viewport);
    await signIn(page, 'researcher');
    await pickDemo(page);
    // the form reads the edition's metadata, never its values
    expect(requests.some((u) => /\/editions\/\d+\/meta$/.test(u))).toBe(true);
    expect(requests.some((u) => /\/editions\/\d+\/data$/.test(u))).toBe(false);
    const rf = page.getByRole('radiogroup', { name: 'Risk-free series' });
    await expect(rf.getByRole('radio', { name: 'subtract RF' }).getAttribute('aria-checked')).resolves.toBe('true');
    await page.getByText("Default: RF, this library's risk-free series.", { exact: false }).waitFor();

    // basis: the default as shared/specs.ts resolves it (standard for second stage, robust for first)
    const basis = page.getByRole('radiogroup', { name: 'Basis' });
    await expect(basis.getByRole('radio', { name: 'default: standard (second stage)' }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByLabel('Resolved basis').textContent()).resolves.toMatch(/rest on the standard basis/);
    await page.getByRole('radiogroup', { name: 'Stage' }).getByRole('radio', { name: 'first' }).click();
    await expect(basis.getByRole('radio', { name: 'default: robust (first stage)' }).getAttribute('aria-checked')).resolves.toBe('true');
    await expect(page.getByLabel('Resolved basis').textContent()).resolves.toMatch(/rest on the robust basis \(the default for first-stage runs\)/);
    await page.getByRole('radiogroup', { name: 'First-stage weighting' }).getByRole('radio', { name: 'covariance, W = Cov(R)⁻¹' }).click();

    // choose assets and factors, then the bootstrap basis: its settings appear with their defaults
    await page.getByRole('button', { name: /^All \d+ test assets$/ }).click();
    for (const f of ['TIDE', 'SWELL']) await page.getByRole('checkbox', { name: `Factor ${f}` }).click();
    await basis.getByRole('radio', { name: 'bootstrap' }).click();
    const boot = page.getByRole('group', { name: 'Bootstrap settings' });
    await boot.waitFor();
    await expect(page.getByLabel('Draws', { exact: true }).inputValue()).resolves.toBe('999');
    await expect(page.getByLabel('Seed', { exact: true }).inputValue()).resolves.toBe('1');
    await page.getByRole('radiogroup', { name: 'Resampling' }).getByRole('radio', { name: 'blocks of periods' }).click();
    await expect(page.getByLabel('Block length', { exact: true }).getAttribute('placeholder')).resolves.toBe('auto: 9'); // ceil(600^(1/3)) = 9
    // the shared checks refuse what does not fit, in their own words
    const problems = page.getByRole('alert', { name: 'Problems with this spec' });
    await page.getByLabel('Block length', { exact: true }).fill('400');
    await expect(problems.textContent()).resolves.toContain('A bootstrap block of 400 periods is too long for T = 600: the largest allowed is T/2 = 300');
    await page.getByLabel('Draws', { exact: true }).fill('12.5');
    await expect(problems.textContent()).resolves.toContain('Draws are a whole number');
    await page.getByLabel('Draws', { exact: true }).fill('50');
    await expect(problems.textContent()).resolves.toContain('Use at least 99 draws');
    await expect(page.getByRole('button', { name: 'Save spec and run' }).getAttribute('aria-disabled')).resolves.toBe('true');
    await page.getByLabel('Draws', { exact: true }).fill('499');
    await page.getByLabel('Block length', { exact: true }).fill('12');
    await page.getByLabel('Spec name', { exact: true }).fill(`Bootstrap basis ${size}`);
    await expect(problems.count()).resolves.toBe(0);
    await expect(page.getByRole('button', { name: 'Save spec and run' }).getAttribute('aria-disabled')).resolves.toBe(null);
    await screens(page, `spec-form-basis-${size}`, 8);

    // saved as shown: the stored spec carries the choices
    await page.getByRole('button', { name: 'Save spec', exact: true }).click();
    await page.waitForURL(/\/specs\/\d+$/);
    const id = Number(page.url().split('/').pop());
    const { spec } = await apiGet<{ spec: { spec: Record<string, unknown> } }>(page, `/specs/${id}`);
    expect(spec.spec).toMatchObject({ stage: 'first', weighting: 'covariance', basis: 'bootstrap', rf: 'RF', bootstrap: { draws: 499, scheme: 'block', blockLength: 12, seed: 1 } });
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('refuses more factors than test assets with the one message of the check, and saves nothing', async () => {
    const { context, page, errors } = await openPage(browser, viewport);
    await signIn(page, 'researcher');
    const specsBefore = await countSpecs(page);
    const runsBefore = await countRuns(page);
    await pickDemo(page);
    await page.getByRole('group', { name: 'Test assets' }).getByRole('checkbox').first().click();
    for (const f of ['TIDE', 'SWELL', 'DRIFT']) await page.getByRole('checkbox', { name: `Factor ${f}` }).click();
    await page.getByLabel('Spec name', { exact: true }).fill('Too many factors');
    const problems = page.getByRole('alert', { name: 'Problems with this spec' });
    const items = await problems.getByText(/^• /).allTextContents();
    expect(items).toHaveLength(1);
    expect(items[0]).toMatch(new RegExp(`^• ${FEWER_ASSETS_THAN_FACTORS}: N = 1 test asset, K = 3 factors`));
    await expect(page.getByLabel('Model size').textContent()).resolves.toMatch(/df = N − K\s*−2/);
    await expect(page.getByText('The spec fits this edition', { exact: false }).count()).resolves.toBe(0);
    for (const name of ['Save spec and run', 'Save spec', 'Run without saving']) {
      const b = page.getByRole('button', { name, exact: true });
      await expect(b.getAttribute('aria-disabled')).resolves.toBe('true');
      await b.click({ force: true });
    }
    await screens(page, `spec-form-n-lt-k-${size}`, 8);
    await page.waitForTimeout(500);
    expect(page.url()).toMatch(/\/runs\/new$/);
    // the server's check says the same words
    const ed = await harbourEdition(page);
    const check = await apiPost(page, '/specs/check', { editionId: ed, spec: { assets: ['Skiff Amber'], factors: ['TIDE', 'SWELL', 'DRIFT'] } });
    const issues = ((await check.json()) as { check: { issues: { message: string }[] } }).check.issues;
    expect(issues.filter((i) => i.message.startsWith(FEWER_ASSETS_THAN_FACTORS))).toHaveLength(1);
    expect(await countSpecs(page)).toBe(specsBefore);
    expect(await countRuns(page)).toBe(runsBefore);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('makes exactly one spec and one run from a double-click on "Save spec and run", each POST with an Idempotency-Key', async () => {
    const { context, page, errors } = await openPage(browser, viewport);
    const posts: { url: string; key: string | undefined }[] = [];
    page.on('request', (r) => {
      if (r.method() === 'POST' && /\/api\/v1\/(specs|runs)$/.test(r.url())) posts.push({ url: r.url(), key: r.headers()['idempotency-key'] });
    });
    await signIn(page, 'researcher');
    const specsBefore = await countSpecs(page);
    const runsBefore = await countRuns(page);
    await pickDemo(page);
    await page.getByRole('button', { name: /^All \d+ test assets$/ }).click();
    for (const f of ['TIDE', 'SWELL']) await page.getByRole('checkbox', { name: `Factor ${f}` }).click();
    await page.getByLabel('Spec name', { exact: true }).fill(`Double click ${size}`);
    await page.getByRole('button', { name: 'Save spec and run' }).dblclick();
    await page.waitForURL(/\/runs\/\d+$/);
    await page.waitForTimeout(1000); // a second request, if any, would have landed by now
    expect(await countSpecs(page)).toBe(specsBefore + 1);
    expect(await countRuns(page)).toBe(runsBefore + 1);
    const specPosts = posts.filter((p) => p.url.endsWith('/specs'));
    const runPosts = posts.filter((p) => p.url.endsWith('/runs'));
    expect(specPosts.length).toBeGreaterThanOrEqual(1);
    expect(runPosts.length).toBeGreaterThanOrEqual(1);
    for (const p of posts) expect(p.key, p.url).toMatch(/^[0-9a-f]{32}$/);
    expect(new Set(specPosts.map((p) => p.key)).size).toBe(1);
    const runId = Number(page.url().split('/').pop());
    const { run } = await apiGet<{ run: { specId: number } }>(page, `/runs/${runId}`);
    const { spec } = await apiGet<{ spec: { name: string } }>(page, `/specs/${run.specId}`);
    expect(spec.name).toBe(`Double click ${size}`);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('says "not found" for a spec or library id that names nothing, instead of loading forever', async () => {
    const { context, page, errors } = await openPage(browser, viewport);
    await signIn(page, 'desk');
    for (const bad of ['abc', '0x10', '999999']) {
      await page.goto(`/specs/${bad}`);
      await page.getByText('Spec not found', { exact: true }).waitFor({ timeout: 10_000 });
      await expect(page.getByText('Loading…', { exact: true }).count()).resolves.toBe(0);
    }
    await screens(page, `spec-not-found-${size}`, 1);
    // the same for a library id that is no number
    await page.goto('/libraries/abc');
    await page.getByText('Library not found', { exact: true }).waitFor({ timeout: 10_000 });
    // 404 from the server is an answer, not a page error
    expect(errors.filter((e) => !/404/.test(e))).toEqual([]);
    await context.close();
  });

  it('archives a spec from the list (hidden by default), shows it with the switch, and restores it', async () => {
    const { context, page, errors } = await openPage(browser, viewport);
    await signIn(page, 'researcher');
    const ed = await harbourEdition(page);
    const name = `Archive me ${size}`;
    const created = await apiPost(page, '/specs', { name, editionId: ed, spec: { assets: ['Skiff Amber', 'Skiff Coral', 'Skiff Jade'], factors: ['TIDE'] } });
    expect(created.status()).toBe(201);
    const id = ((await created.json()) as { spec: { id: number } }).spec.id;
    await page.goto('/specs');
    await page.getByLabel('Filter model specs', { exact: true }).fill(name);
    await page.getByRole('button', { name: `Archive spec ${name}` }).click();
    await page.getByText('No rows match the filter', { exact: false }).or(page.getByText('No specs listed')).first().waitFor();
    const stored = await apiGet<{ spec: { archivedAt: string | null } }>(page, `/specs/${id}`);
    expect(stored.spec.archivedAt).not.toBeNull();
    const sw = page.getByRole('switch', { name: 'Show archived specs' });
    await expect(sw.getAttribute('aria-checked')).resolves.toBe('false');
    await sw.click();
    await expect(sw.getAttribute('aria-checked')).resolves.toBe('true');
    await page.getByRole('button', { name: `Restore spec ${name}` }).waitFor();
    await expect(page.getByText('archived', { exact: true }).count()).resolves.toBeGreaterThan(0);
    await screens(page, `specs-archived-${size}`, 2);
    await page.getByRole('button', { name: `Restore spec ${name}` }).click();
    await page.getByRole('button', { name: `Archive spec ${name}` }).waitFor();
    expect((await apiGet<{ spec: { archivedAt: string | null } }>(page, `/specs/${id}`)).spec.archivedAt).toBeNull();
    await sw.click();
    await page.getByRole('button', { name: `Archive spec ${name}` }).waitFor();
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('spec form: what the server still refuses', () => {
  it('puts the issues of a refusal on the fields they name', async () => {
    const { context, page } = await openPage(browser, WIDE);
    await signIn(page, 'researcher');
    await pickDemo(page);
    await page.getByRole('button', { name: /^All \d+ test assets$/ }).click();
    await page.getByRole('checkbox', { name: 'Factor TIDE' }).click();
    await page.getByLabel('Spec name', { exact: true }).fill('Refused by the server');
    // a refusal the form cannot foresee (e.g. the edition changed meanwhile), in the server's envelope
    await page.route('**/api/v1/specs', (route) =>
      route.request().method() === 'POST'
        ? route.fulfill({
            status: 422,
            contentType: 'application/json',
            body: JSON.stringify({
              error: {
                code: 'unprocessable',
                message: "The spec does not fit edition 1 of Harbour market (demo): The edition has no series 'Skiff Amber'",
                issues: [
                  { path: ['spec', 'assets', 0], message: "The edition has no series 'Skiff Amber'" },
                  { path: ['spec', 'lags'], message: 'A HAC lag of 9 is too long for T = 30 periods' },
                ],
              },
            }),
          })
        : route.continue(),
    );
    await page.getByRole('button', { name: 'Save spec', exact: true }).click();
    await page.getByText("The edition has no series 'Skiff Amber'", { exact: true }).waitFor();
    await page.getByText('A HAC lag of 9 is too long for T = 30 periods', { exact: true }).waitFor();
    await page.getByText('Keelson refused this spec; the reason is shown at the field above.', { exact: true }).waitFor();
    expect(page.url()).toMatch(/\/runs\/new$/);
    await screens(page, 'spec-form-server-issues-wide', 1);
    await context.close();
  });
});

describe('home', () => {
  it('links every role to the methods page', async () => {
    const { context, page } = await openPage(browser, PHONE);
    await signIn(page, 'desk');
    await page.getByRole('link', { name: 'Read the methods' }).click();
    await page.waitForURL(/\/methods$/);
    await context.close();
  });
});
