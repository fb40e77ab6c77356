/**
 * Client shell end to end against the real server: first paint and a quiet console, sign-in per role,
 * role-aware navigation, wrong password, invitation round trip through the outbox, 404, and no
 * request leaving the origin.
 */
import { join } from 'node:path';
import { mkdirSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import type { Role } from '../../shared/roles';
import {
  DEMO_ROLES,
  PHONE,
  SCREENSHOT_DIR,
  WIDE,
  baseUrl,
  expectSameOrigin,
  goNav,
  goTeamPage,
  launchBrowser,
  navLabels,
  openPage,
  shot,
  signIn,
  signInHere,
  signOut,
} from './helpers';

let browser: Browser;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

/** Phone bar (≤ 4) and wide rail per role, as designed in components/nav-items.ts. */
const PHONE_NAV: Record<Role, string[]> = {
  desk: ['Home', 'Libraries', 'Runs'],
  researcher: ['Home', 'Libraries', 'Runs'],
  reviewer: ['Home', 'Libraries', 'Runs', 'Sign-offs'],
  admin: ['Home', 'Libraries', 'Runs', 'Team'],
};
const WIDE_NAV: Record<Role, string[]> = {
  desk: ['Home', 'Libraries', 'Runs'],
  researcher: ['Home', 'Libraries', 'Runs'],
  reviewer: ['Home', 'Libraries', 'Runs', 'Sign-offs'],
  admin: ['Home', 'Libraries', 'Runs', 'Sign-offs', 'Team'],
};

/**
 * Really visible to a person: a box on screen, no hidden / transparent ancestor, and the topmost
 * element at its centre is the element itself or inside it (not an overlay above it).
 */
function seenByUser(l: Locator): Promise<boolean> {
  return l.evaluate((el) => {
    const r = el.getBoundingClientRect();
    if (r.width === 0 || r.height === 0 || r.bottom < 0 || r.top > window.innerHeight) return false;
    for (let n: Element | null = el; n; n = n.parentElement) {
      const st = getComputedStyle(n);
      if (st.visibility === 'hidden' || st.display === 'none' || Number(st.opacity) < 0.99) return false;
    }
    const hit = document.elementFromPoint(r.left + r.width / 2, r.top + r.height / 2);
    return !!hit && el.contains(hit);
  });
}

/** Every console error or warning and every HTTP answer ≥ 400 the page sees — nothing filtered. */
function recordNoise(page: Page): string[] {
  const noise: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error' || m.type() === 'warning') noise.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('pageerror', (e) => noise.push(`pageerror: ${e.message}`));
  page.on('response', (r) => {
    if (r.status() >= 400) noise.push(`HTTP ${r.status()} ${r.request().method()} ${new URL(r.url()).pathname}`);
  });
  return noise;
}

/** A screenshot taken at once (no waiting for fonts: this is what a person sees first). */
async function firstShot(page: Page, name: string): Promise<void> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  await page.screenshot({ path: join(SCREENSHOT_DIR, `${name}.png`) });
}

describe('first paint and a quiet console (signed out)', () => {
  for (const [size, viewport] of [['phone', PHONE], ['wide', WIDE]] as const) {
    it(`${size}: the first frame after the script runs is the sign-in form, and the console stays empty`, async () => {
      const context = await browser.newContext({ viewport, baseURL: baseUrl() });
      const page = await context.newPage();
      const noise = recordNoise(page);
      await page.goto('/', { waitUntil: 'commit' });
      // The first thing React puts on screen (no wait for fonts or the session check).
      const heading = page.getByRole('heading', { name: 'Sign in', level: 1 });
      await heading.waitFor({ state: 'attached' });
      await firstShot(page, `first-paint-${size}`);
      expect(await seenByUser(heading)).toBe(true);
      expect(await seenByUser(page.getByLabel('E-mail', { exact: true }))).toBe(true);
      expect(await seenByUser(page.getByRole('button', { name: 'Sign in', exact: true }))).toBe(true);
      expect(new URL(page.url()).pathname).toBe('/sign-in');
      await page.waitForLoadState('networkidle');
      // Signed out is an answer (GET /auth/me → 200 { user: null }), so the browser logs no failed request.
      expect(noise).toEqual([]);
      await context.close();
    });
  }

  it('before the script has run, the page is already the paper frame with the name (not white)', async () => {
    const context = await browser.newContext({ viewport: PHONE, baseURL: baseUrl(), javaScriptEnabled: false });
    const page = await context.newPage();
    await page.goto('/sign-in');
    await firstShot(page, 'first-paint-before-script-phone');
    await expect(page.evaluate(() => getComputedStyle(document.body).backgroundColor)).resolves.toBe('rgb(246, 244, 239)');
    expect(await seenByUser(page.getByText('Keelson', { exact: true }))).toBe(true);
    await context.close();
  });

  it('a signed-in reload never flashes the sign-in form, and its first frame is the signed-in frame', async () => {
    const { context, page } = await openPage(browser, WIDE);
    await signIn(page, 'desk');
    const noise = recordNoise(page);
    // Records, from the first script on, whether a "Sign in" heading ever appears in the page.
    await page.addInitScript(() => {
      const w = window as unknown as { sawSignIn: boolean };
      w.sawSignIn = false;
      new MutationObserver(() => {
        for (const h of document.querySelectorAll('[role="heading"]')) if (h.textContent === 'Sign in') w.sawSignIn = true;
      }).observe(document, { childList: true, subtree: true, characterData: true });
    });
    await page.reload({ waitUntil: 'commit' });
    const frame = page.getByRole('status', { name: 'Checking your session' }).or(page.getByRole('navigation', { name: 'Main' }));
    await frame.first().waitFor({ state: 'attached' });
    await firstShot(page, 'first-paint-signed-in-wide');
    await page.getByRole('heading', { level: 1 }).filter({ hasText: 'Welcome' }).waitFor();
    await expect(page.evaluate(() => (window as unknown as { sawSignIn: boolean }).sawSignIn)).resolves.toBe(false);
    await page.waitForLoadState('networkidle');
    expect(noise).toEqual([]);
    await context.close();
  });
});

describe('sign-in', () => {
  it('sends an unauthenticated visitor to /sign-in and back to the page they asked for', async () => {
    const { context, page, requests, errors } = await openPage(browser, PHONE);
    await page.goto('/runs');
    await page.waitForURL(/\/sign-in\?next=%2Fruns/);
    await page.getByRole('heading', { name: 'Sign in' }).waitFor();
    await shot(page, 'sign-in-phone');
    await signInHere(page, 'researcher@keelson.test', 'keelson-demo');
    await page.waitForURL(`${baseUrl()}/runs`);
    await expect(page.getByRole('heading', { name: 'Runs', level: 1 }).isVisible()).resolves.toBe(true);
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });

  it('shows the server message for a wrong password and stays on sign-in', async () => {
    const { context, page, requests } = await openPage(browser, WIDE);
    await page.goto('/sign-in');
    await shot(page, 'sign-in-wide');
    await signInHere(page, 'desk@keelson.test', 'not-the-password');
    const alert = page.getByRole('alert').filter({ hasText: 'Sign-in failed' });
    await alert.waitFor();
    // Message text from server/routes/auth.ts (the 401 envelope).
    await expect(alert.textContent()).resolves.toContain('E-mail or password is wrong, or the account is deactivated');
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    await shot(page, 'sign-in-wrong-password-wide');
    expectSameOrigin(requests);
    await context.close();
  });

  it('checks the form before calling the server', async () => {
    const { context, page } = await openPage(browser, PHONE);
    await page.goto('/sign-in');
    await page.getByLabel('E-mail', { exact: true }).fill('not-an-address');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.getByText('Enter an e-mail address such as name@example.org').waitFor();
    await context.close();
  });
});

describe('navigation by role', () => {
  for (const role of DEMO_ROLES) {
    it(`${role}: phone bar and wide rail list only the role's destinations; sign out works`, async () => {
      const phone = await openPage(browser, PHONE);
      await signIn(phone.page, role);
      expect(await navLabels(phone.page)).toEqual(PHONE_NAV[role]);
      await phone.page.getByRole('heading', { level: 1 }).filter({ hasText: 'Welcome' }).waitFor();
      await shot(phone.page, `home-${role}-phone`);

      // Same session cookie, wide viewport: the rail.
      const wide = await phone.context.newPage();
      await wide.setViewportSize(WIDE);
      await wide.goto('/');
      expect(await navLabels(wide)).toEqual(WIDE_NAV[role]);
      await wide.getByRole('heading', { level: 1 }).filter({ hasText: 'Welcome' }).waitFor();
      await shot(wide, `home-${role}-wide`);
      await wide.close();

      // Runs: only roles that write specs (researcher, admin) are offered "New model spec".
      await goNav(phone.page, 'Runs');
      await phone.page.getByRole('heading', { name: 'Runs', level: 1 }).waitFor();
      await phone.page.getByRole('table', { name: /runs/i }).or(phone.page.getByRole('list', { name: /runs/i })).or(phone.page.getByRole('status')).first().waitFor();
      const writesSpecs = role === 'researcher' || role === 'admin';
      expect(await phone.page.getByText('New model spec', { exact: true }).count()).toBe(writesSpecs ? 1 : 0);

      // Team is admin-only: others who type the URL see why, not the user list.
      await phone.page.goto('/admin');
      if (role === 'admin') await phone.page.getByRole('table', { name: 'Users' }).or(phone.page.getByRole('list', { name: 'Users' })).waitFor();
      else await phone.page.getByText('Not part of your role').waitFor();

      await signOut(phone.page);
      // After sign-out a protected page sends us back to sign-in.
      await phone.page.goto('/runs');
      await phone.page.waitForURL(/\/sign-in/);
      expectSameOrigin(phone.requests);
      expect(phone.errors).toEqual([]);
      await phone.context.close();
    });
  }
});

describe('admin invites a user', () => {
  it('invitation e-mail in the outbox; the invitee sets a password and lands signed in with the invited role', async () => {
    const admin = await openPage(browser, WIDE);
    await signIn(admin.page, 'admin');
    await goNav(admin.page, 'Team');
    await admin.page.getByRole('table', { name: 'Users' }).waitFor();
    // Long e-mails wrap after the @ at most, never mid-word: each part sits whole on one line.
    const mailCell = admin.page.getByRole('table', { name: 'Users' }).getByLabel('researcher@keelson.test', { exact: true });
    const lines = await mailCell.evaluate((el) => {
      const r = document.createRange();
      r.selectNodeContents(el);
      return new Set([...r.getClientRects()].map((x) => Math.round(x.top))).size;
    });
    expect(lines).toBeLessThanOrEqual(2);
    await expect(mailCell.textContent()).resolves.toMatch(/^researcher@\u200B?keelson\.test$/);
    await shot(admin.page, 'admin-users-wide');

    await goTeamPage(admin.page, 'Invitations');
    await admin.page.getByLabel('Invitee e-mail').fill('wren.halyard@example.org');
    await admin.page.getByLabel('Invitee name').fill('Wren Halyard');
    await admin.page.getByRole('radiogroup', { name: 'Invitee role' }).getByRole('radio', { name: 'Reviewer' }).click();
    await admin.page.getByRole('button', { name: 'Send invitation' }).click();
    await admin.page.getByRole('status').filter({ hasText: 'Invitation sent to wren.halyard@example.org as reviewer' }).waitFor();
    const invitations = admin.page.getByRole('table', { name: 'Invitations' });
    await invitations.getByRole('row').filter({ hasText: 'wren.halyard@example.org' }).filter({ hasText: 'pending' }).waitFor();
    await shot(admin.page, 'admin-invitations-wide');

    await goTeamPage(admin.page, 'Outbox');
    await admin.page.getByRole('button', { name: /You are invited to Keelson as Reviewer, to wren\.halyard@example\.org/ }).click();
    const body = await admin.page.getByRole('article', { name: /You are invited to Keelson/ }).textContent();
    await shot(admin.page, 'admin-outbox-wide');
    const link = body?.match(/https?:\/\/\S+\/accept-invite\?token=[A-Za-z0-9_-]+/)?.[0];
    expect(link, `no invitation link in the e-mail body: ${body}`).toBeTruthy();
    expect(new URL(link!).origin).toBe(new URL(baseUrl()).origin);

    // The invitee: a fresh context (no cookies), at phone size.
    const invitee = await openPage(browser, PHONE);
    await invitee.page.goto(link!);
    await invitee.page.getByRole('heading', { name: 'Accept your invitation' }).waitFor();
    await invitee.page.getByText('wren.halyard@example.org').waitFor();
    await invitee.page.getByLabel('New password', { exact: true }).fill('sturdy-keel-42');
    await invitee.page.getByLabel('Repeat the password', { exact: true }).fill('sturdy-keel-4');
    await invitee.page.getByRole('button', { name: 'Set password and sign in' }).click();
    await invitee.page.getByText('The two passwords differ').waitFor();
    await invitee.page.getByLabel('Repeat the password', { exact: true }).fill('sturdy-keel-42');
    await shot(invitee.page, 'accept-invite-phone');
    await invitee.page.getByRole('button', { name: 'Set password and sign in' }).click();
    await invitee.page.waitForURL(`${baseUrl()}/`);
    await invitee.page.getByRole('heading', { name: 'Welcome, Wren', level: 1 }).waitFor();
    expect(await navLabels(invitee.page)).toEqual(PHONE_NAV.reviewer);
    await invitee.page.getByText('Signed in as reviewer').waitFor();
    // The link works once.
    const again = await openPage(browser, PHONE);
    await again.page.goto(link!);
    await again.page.getByText('This invitation cannot be used').waitFor();
    await again.context.close();

    // Back on the admin side: the invitation is accepted, the new user is listed, the audit log shows it.
    await goTeamPage(admin.page, 'Invitations');
    await admin.page.reload();
    await invitations.getByRole('row').filter({ hasText: 'wren.halyard@example.org' }).filter({ hasText: 'accepted' }).waitFor();
    await goTeamPage(admin.page, 'Users');
    await admin.page.getByRole('table', { name: 'Users' }).getByRole('row').filter({ hasText: 'Wren Halyard' }).filter({ hasText: 'Reviewer' }).waitFor();
    await goTeamPage(admin.page, 'Audit log');
    await admin.page.getByRole('table', { name: 'Audit log' }).getByText('invitation.accept').first().waitFor();
    await shot(admin.page, 'admin-audit-wide');

    expectSameOrigin(admin.requests);
    expectSameOrigin(invitee.requests);
    expect(admin.errors).toEqual([]);
    expect(invitee.errors).toEqual([]);
    await invitee.context.close();
    await admin.context.close();
  });

  it('admin changes a role and deactivates a user after confirming (phone)', async () => {
    const { context, page, requests } = await openPage(browser, PHONE);
    await signIn(page, 'admin');
    await page.goto('/admin');
    const users = page.getByRole('list', { name: 'Users' });
    await users.waitFor();
    await shot(page, 'admin-users-phone');
    await page.getByRole('button', { name: 'Change Wren Halyard' }).click();
    await page.getByRole('radiogroup', { name: 'Role of Wren Halyard' }).getByRole('radio', { name: 'Desk' }).click();
    await page.getByRole('button', { name: 'Save role' }).click();
    await page.getByRole('status').filter({ hasText: 'Saved.' }).waitFor();
    await page.getByRole('button', { name: 'Deactivate Wren Halyard' }).click();
    const confirm = page.getByRole('alertdialog', { name: 'Confirm deactivation' });
    await confirm.waitFor();
    await confirm.scrollIntoViewIfNeeded();
    await shot(page, 'admin-deactivate-confirm-phone');
    await page.getByRole('button', { name: 'Yes, deactivate' }).click();
    await page.getByRole('region', { name: 'Edit Wren Halyard' }).getByText('deactivated').waitFor();

    // The server's own rule shows through: the last admin cannot demote themself.
    await page.getByRole('button', { name: 'Close' }).click();
    await page.getByRole('button', { name: 'Change Ada Quarrier' }).click();
    await page.getByRole('radiogroup', { name: 'Role of Ada Quarrier' }).getByRole('radio', { name: 'Desk' }).click();
    await page.getByRole('button', { name: 'Save role' }).click();
    await page.getByText('Keelson needs at least one active admin').waitFor();

    await goTeamPage(page, 'Outbox');
    await page.getByRole('list', { name: 'Messages' }).waitFor();
    await page.getByRole('button', { name: /You are invited to Keelson as Reviewer/ }).click();
    await page.getByRole('article', { name: /You are invited to Keelson/ }).getByText(/accept-invite\?token=/).waitFor();
    // The open message shows its "To … · time" line once (in the body), not again in the head.
    const openItem = page.getByRole('listitem').filter({ has: page.getByRole('article', { name: /You are invited to Keelson/ }) });
    await expect(openItem.getByText(/wren\.halyard@example\.org ·/).count()).resolves.toBe(1);
    await shot(page, 'admin-outbox-phone');
    await page.getByRole('button', { name: 'Account menu' }).click();
    await page.getByRole('menu', { name: 'Account' }).getByText('admin@keelson.test').waitFor();
    await shot(page, 'account-menu-phone');
    expectSameOrigin(requests);
    await context.close();

    // The deactivated invitee can no longer sign in.
    const gone = await openPage(browser, PHONE);
    await gone.page.goto('/sign-in');
    await signInHere(gone.page, 'wren.halyard@example.org', 'sturdy-keel-42');
    await gone.page.getByText('E-mail or password is wrong, or the account is deactivated').waitFor();
    await gone.context.close();
  });
});

describe('CSRF', () => {
  it('a stale token (session replaced in another tab) is refetched and the write retried once', async () => {
    const { context, page, requests } = await openPage(browser, WIDE);
    await signIn(page, 'admin');
    // Navigate inside the app (no reload), so the token cached by the sign-in POST is kept.
    await goNav(page, 'Team');
    await goTeamPage(page, 'Invitations');
    await page.getByLabel('Invitee e-mail').waitFor();
    // Another tab of the same browser signs out and in again: new session, so this tab's token is stale.
    const other = await context.newPage();
    await other.goto('/');
    await other.getByRole('navigation', { name: 'Main' }).waitFor();
    await other.getByRole('button', { name: 'Account menu' }).click();
    await other.getByRole('button', { name: 'Sign out' }).click();
    await other.waitForURL(/\/sign-in/);
    await signInHere(other, 'admin@keelson.test', 'keelson-demo');
    await other.getByRole('navigation', { name: 'Main' }).waitFor();
    const csrfBefore = requests.filter((u) => u.endsWith('/api/v1/auth/csrf')).length;
    const postStatuses: number[] = [];
    page.on('response', (r) => {
      if (r.url().endsWith('/api/v1/admin/invitations') && r.request().method() === 'POST') postStatuses.push(r.status());
    });

    await page.getByLabel('Invitee e-mail').fill('moss.capstan@example.org');
    await page.getByLabel('Invitee name').fill('Moss Capstan');
    await page.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByRole('status').filter({ hasText: 'Invitation sent to moss.capstan@example.org' }).waitFor();
    // The token cached at sign-in belongs to the replaced session: refused once, refetched, retried once.
    expect(postStatuses).toEqual([403, 201]);
    expect(requests.filter((u) => u.endsWith('/api/v1/auth/csrf')).length).toBe(csrfBefore + 1);
    expectSameOrigin(requests);
    await context.close();
  });
});

describe('fonts and network', () => {
  it('loads the shipped fonts from the server itself; no request leaves the origin', async () => {
    const { context, page, requests } = await openPage(browser, WIDE);
    await signIn(page, 'desk');
    await page.evaluate(() => document.fonts.ready);
    // Each face resolves to a shipped file: document.fonts.load() fetches it (from the origin) and reports it loaded.
    const families = ['Inter_400Regular', 'Inter_600SemiBold', 'IBMPlexMono_400Regular', 'IBMPlexMono_500Medium'];
    const loaded = await page.evaluate(async (fams) => {
      const out: string[] = [];
      for (const f of fams) {
        const faces = await document.fonts.load(`16px "${f}"`);
        if (faces.some((x) => x.status === 'loaded')) out.push(f);
      }
      return out;
    }, families);
    expect(loaded).toEqual(families);
    const fontFiles = requests.filter((u) => u.endsWith('.ttf'));
    expect(fontFiles.length).toBeGreaterThanOrEqual(4);
    expectSameOrigin(requests);
    await context.close();
  });
});

describe('unknown pages', () => {
  it('shows the 404 page for an unknown URL', async () => {
    const { context, page, requests } = await openPage(browser, PHONE);
    await page.goto('/no-such-place/here');
    await page.getByRole('heading', { name: 'Page not found' }).waitFor();
    await page.getByText('/no-such-place/here').waitFor();
    await shot(page, 'not-found-phone');
    expectSameOrigin(requests);
    await context.close();
  });
});
