/**
 * The Methods screen end to end: a signed-in user opens /methods and reads docs/methods.md rendered
 * (headings, paragraphs, formulas in the monospace face), fetched from Keelson's own API only;
 * signed out, /methods sends the user to sign in. Phone and wide screenshots.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import type { Browser } from 'playwright-core';
import { PHONE, WIDE, expectSameOrigin, launchBrowser, openPage, shot, signIn } from './helpers';
import { METHODS_PATH } from '../../server/routes/docs';

const md = readFileSync(METHODS_PATH, 'utf8');
const sections = [...md.matchAll(/^## (.+)$/gm)].map((m) => m[1]);

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('Methods screen', () => {
  it('renders the methods page for a desk user on a phone: title, every section, formulas in mono', async () => {
    const { page, requests, errors, context } = await openPage(browser, PHONE);
    await signIn(page, 'desk', { next: '/methods' });
    await page.getByRole('heading', { level: 1, name: 'How Keelson estimates and tests a factor model' }).waitFor();
    for (const s of sections) await expect(page.getByRole('heading', { name: s, exact: true }).count()).resolves.toBe(1);
    const formula = page.getByText('Γ_j = (1/T) Σ_{t=j+1..T} x_t x_{t−j}\'', { exact: false }).first();
    await formula.waitFor();
    const face = await formula.evaluate((el) => getComputedStyle(el).fontFamily);
    expect(face).toMatch(/IBMPlexMono/);
    await expect(page.getByText('needed, not priced alone').count()).resolves.toBeGreaterThan(0);
    await shot(page, 'methods-phone');
    expect(errors).toEqual([]);
    expectSameOrigin(requests);
    expect(requests.some((u) => u.endsWith('/api/v1/docs/methods'))).toBe(true);
    await context.close();
  });

  it('reads well on a wide screen and needs a sign-in', async () => {
    const { page, context } = await openPage(browser, WIDE);
    await page.goto('/methods');
    await page.waitForURL(/\/sign-in/);
    await signIn(page, 'researcher', { next: '/methods' });
    await page.getByRole('heading', { name: '6. Misspecification-robust standard errors' }).scrollIntoViewIfNeeded();
    await shot(page, 'methods-wide');
    await context.close();
  });
});
