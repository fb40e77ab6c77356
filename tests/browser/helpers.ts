/**
 * Shared helpers for Keelson's browser tests (playwright-core + Debian Chromium, never a downloaded browser).
 * Typical use:
 *   const browser = await launchBrowser();
 *   const { page, requests } = await openPage(browser, PHONE);
 *   await signIn(page, 'researcher');
 *   await shot(page, 'runs-phone');
 *   expectSameOrigin(requests);
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { expect, inject } from 'vitest';
import type { Role } from '../../shared/roles';
import { ROOT } from '../../scripts/web-build';

export const CHROMIUM_PATH = '/usr/bin/chromium';
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export const PHONE = { width: 390, height: 844 } as const;
export const WIDE = { width: 1280, height: 800 } as const;
export type Viewport = { width: number; height: number };

export const DEMO_PASSWORD = 'keelson-demo';
export const DEMO_ROLES: readonly Role[] = ['admin', 'researcher', 'reviewer', 'desk'];
export const demoEmail = (role: Role) => `${role}@keelson.test`;

export const SCREENSHOT_DIR = join(ROOT, 'screenshots');

/** Base URL of the server started by global-setup.ts. */
export function baseUrl(): string {
  return inject('baseUrl');
}

export function launchBrowser(): Promise<Browser> {
  return chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
}

export interface OpenedPage {
  context: BrowserContext;
  page: Page;
  /** Every URL the page requested (documents, scripts, fonts, XHR…). */
  requests: string[];
  /** Uncaught page errors and console errors. */
  errors: string[];
}

/**
 * A fresh context (own cookies) and page at the given viewport, recording requests and errors, on
 * the suite's server or on `baseURL` (a test file's own server).
 */
export async function openPage(browser: Browser, viewport: Viewport = PHONE, baseURL = baseUrl()): Promise<OpenedPage> {
  const context = await browser.newContext({ viewport, baseURL });
  const page = await context.newPage();
  const requests: string[] = [];
  const errors: string[] = [];
  page.on('request', (r) => requests.push(r.url()));
  page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    // HTTP error statuses (401 from /auth/me before sign-in, a wrong password…) are expected answers, not page errors.
    if (m.type() === 'error' && !m.text().startsWith('Failed to load resource')) errors.push(`console: ${m.text()}`);
  });
  page.setDefaultTimeout(30_000); // generous: the machine is shared with builds and other suites
  return { context, page, requests, errors };
}

/** Signs in through the sign-in screen and waits until the signed-in shell shows. */
export async function signIn(page: Page, role: Role, opts: { next?: string; password?: string } = {}): Promise<void> {
  await page.goto(opts.next ? `/sign-in?next=${encodeURIComponent(opts.next)}` : '/sign-in');
  await signInHere(page, demoEmail(role), opts.password ?? DEMO_PASSWORD);
  await page.getByRole('navigation', { name: 'Main' }).waitFor();
}

/** Fills and submits the sign-in form already on screen. */
export async function signInHere(page: Page, email: string, password: string): Promise<void> {
  await page.getByLabel('E-mail', { exact: true }).fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
}

/** Signs out through the account menu and waits for the sign-in screen. */
export async function signOut(page: Page): Promise<void> {
  await page.getByRole('button', { name: 'Account menu' }).click();
  await page.getByRole('button', { name: 'Sign out' }).click();
  await page.waitForURL(/\/sign-in/);
}

/** Names of the main navigation's links as shown (bottom bar on phones, rail on wide screens). */
export async function navLabels(page: Page): Promise<string[]> {
  const nav = page.getByRole('navigation', { name: 'Main' });
  await nav.waitFor();
  return nav.getByRole('link').evaluateAll((els) => els.map((e) => e.getAttribute('aria-label') ?? e.textContent ?? ''));
}

/** Full-page screenshot under screenshots/ (git-ignored); returns the path. */
export async function shot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const path = join(SCREENSHOT_DIR, `${name}.png`);
  await page.evaluate(() => document.fonts.ready);
  await page.screenshot({ path, fullPage: true });
  return path;
}

/** Scrolls the app's own tallest scrolling view by one screenful less 100 px; false at its end. */
export function scrollAppView(page: Page): Promise<boolean> {
  return page.evaluate(() => {
    const els = [...document.querySelectorAll('div')].filter((d) => {
      const s = getComputedStyle(d);
      return (s.overflowY === 'auto' || s.overflowY === 'scroll') && d.scrollHeight > d.clientHeight + 5;
    });
    const el = els.sort((a, b) => b.clientHeight - a.clientHeight)[0];
    if (!el) return false;
    const before = el.scrollTop;
    el.scrollTop += el.clientHeight - 100;
    return el.scrollTop !== before;
  });
}

/**
 * Screenshots of the whole scrolling screen, one viewport at a time (the app scrolls inside its
 * own view, so a full-page shot would show only the first screen): `<dir>/<name>-<i>.png`.
 */
export async function scrollShots(page: Page, name: string, opts: { dir?: string; max?: number; fromTop?: boolean; pauseMs?: number } = {}): Promise<void> {
  const dir = opts.dir ?? SCREENSHOT_DIR;
  mkdirSync(dir, { recursive: true });
  await page.evaluate(async (fromTop) => {
    await document.fonts.ready;
    if (fromTop) for (const d of document.querySelectorAll('div')) if (d.scrollTop > 0) d.scrollTop = 0;
  }, opts.fromTop ?? false);
  if (opts.fromTop) await page.waitForTimeout(200);
  for (let i = 0; i < (opts.max ?? 6); i++) {
    if (i > 0) {
      if (!(await scrollAppView(page))) break;
      await page.waitForTimeout(opts.pauseMs ?? 250);
    }
    await page.screenshot({ path: join(dir, `${name}-${i}.png`) });
  }
}

/** Asserts every recorded request stayed on the server's origin (or data:/blob:): nothing leaves localhost. */
export function expectSameOrigin(requests: readonly string[], origin = new URL(baseUrl()).origin): void {
  const outside = requests.filter((u) => !u.startsWith('data:') && !u.startsWith('blob:') && new URL(u).origin !== origin);
  expect(outside).toEqual([]);
}

/** Follows a main-navigation destination by its exact label (bottom bar or rail). */
export async function goNav(page: Page, label: string): Promise<void> {
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: label, exact: true }).click();
}

/** Follows a Team page link (Users, Invitations, Outbox, Audit log). */
export async function goTeamPage(page: Page, label: 'Users' | 'Invitations' | 'Outbox' | 'Audit log'): Promise<void> {
  await page.getByRole('navigation', { name: 'Team pages' }).getByRole('link', { name: label, exact: true }).click();
}

/** A POST (or PUT) to /api/v1<path> with the page's session and a fresh CSRF token. */
export async function apiPost(page: Page, path: string, body: unknown, method: 'post' | 'put' = 'post') {
  const csrf = ((await (await page.request.get('/api/v1/auth/csrf')).json()) as { token: string }).token;
  return page.request[method](`/api/v1${path}`, { data: body, headers: { 'x-csrf-token': csrf } });
}

/**
 * The demo library Harbour market's latest edition and the spec of its five-factor model (every
 * test asset, GALE not traded, less RF), read through the API as the signed-in page.
 */
export async function harbourFiveFactors(page: Page): Promise<{ editionId: number; spec: { assets: string[]; factors: string[]; nonTraded: string[]; rf: string } }> {
  const libs = ((await (await page.request.get('/api/v1/libraries')).json()) as { libraries: { id: number; name: string; latestEdition: number }[] }).libraries;
  const lib = libs.find((l) => l.name.startsWith('Harbour market'))!;
  const ed = ((await (await page.request.get(`/api/v1/libraries/${lib.id}/editions/${lib.latestEdition}`)).json()) as {
    edition: { id: number; series: { name: string; kind: string }[] };
  }).edition;
  const assets = ed.series.filter((x) => x.kind === 'asset').map((x) => x.name);
  return { editionId: ed.id, spec: { assets, factors: ['TIDE', 'SWELL', 'DRIFT', 'GALE', 'BALLAST'], nonTraded: ['GALE'], rf: 'RF' } };
}
