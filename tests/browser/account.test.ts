/**
 * Account and Team chores end to end against the real server: changing a password (the agreed
 * `POST /api/v1/auth/password` contract), the audit log in server pages with details in words, a
 * sign-off request whose note reaches the reviewer's outbox, and one press = one request on every
 * creating button (double clicks create nothing twice).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { request as playwrightRequest, type APIRequestContext, type Browser, type Page } from 'playwright-core';
import { DEMO_PASSWORD, PHONE, WIDE, baseUrl, expectSameOrigin, goTeamPage, launchBrowser, openPage, shot, signIn, signInHere } from './helpers';

let browser: Browser;
let adminApi: APIRequestContext;

/** A signed-in API client (own cookie jar) that sends the CSRF token on writes. */
async function apiAs(email: string, password = DEMO_PASSWORD) {
  const ctx = await playwrightRequest.newContext({ baseURL: baseUrl() });
  const before = ((await (await ctx.get('/api/v1/auth/csrf')).json()) as { token: string }).token;
  const login = await ctx.post('/api/v1/auth/login', { data: { email, password }, headers: { 'x-csrf-token': before } });
  expect(login.status(), `sign-in of ${email}`).toBe(200);
  // A server that rotates the token on sign-in sends the new one back; otherwise the old one stays valid.
  const csrf = ((await login.json()) as { csrfToken?: string }).csrfToken ?? before;
  return Object.assign(ctx, {
    postJson: (path: string, data: unknown) => ctx.post(`/api/v1${path}`, { data: data as object, headers: { 'x-csrf-token': csrf } }),
    getJson: async <T>(path: string): Promise<T> => {
      const r = await ctx.get(`/api/v1${path}`);
      expect(r.status(), path).toBe(200);
      return (await r.json()) as T;
    },
  });
}
type Api = Awaited<ReturnType<typeof apiAs>>;
let admin: Api;

/** A new person invited by the admin who has set `password` through the invitation link. */
async function invitedUser(name: string, email: string, role: 'researcher' | 'reviewer' | 'desk', password: string): Promise<void> {
  expect((await admin.postJson('/admin/invitations', { email, name, role })).status()).toBe(201);
  const { messages } = await admin.getJson<{ messages: { to: string; text: string }[] }>('/admin/outbox');
  const token = messages.find((m) => m.to === email)?.text.match(/accept-invite\?token=([A-Za-z0-9_-]+)/)?.[1];
  expect(token, `invitation link for ${email}`).toBeTruthy();
  const anon = await playwrightRequest.newContext({ baseURL: baseUrl() });
  const csrf = ((await (await anon.get('/api/v1/auth/csrf')).json()) as { token: string }).token;
  expect((await anon.post('/api/v1/invitations/accept', { data: { token, password }, headers: { 'x-csrf-token': csrf } })).status()).toBe(201);
  await anon.dispose();
}

async function fieldError(page: Page, label: string): Promise<string> {
  // TextField puts its error right under the input as role=alert inside the same wrapper.
  const wrap = page.getByLabel(label, { exact: true }).locator('xpath=..');
  return (await wrap.getByRole('alert').textContent()) ?? '';
}

beforeAll(async () => {
  browser = await launchBrowser();
  admin = await apiAs('admin@keelson.test');
  adminApi = admin;
});
afterAll(async () => {
  await adminApi?.dispose();
  await browser?.close();
});

describe('change password (Account)', () => {
  it('checks the form, shows a wrong current password on its field, changes it; the old one stops working', async () => {
    await invitedUser('Skye Gunwale', 'skye.gunwale@example.org', 'researcher', 'first-pass-word-1');
    const { context, page, requests, errors } = await openPage(browser, PHONE);
    await page.goto('/sign-in');
    await signInHere(page, 'skye.gunwale@example.org', 'first-pass-word-1');
    await page.getByRole('navigation', { name: 'Main' }).waitFor();
    await page.getByRole('button', { name: 'Account menu' }).click();
    await page.getByRole('button', { name: 'Account', exact: true }).click();
    await page.getByRole('heading', { name: 'Change password' }).waitFor();

    // Checked in the browser first: nothing is sent.
    const posts: number[] = [];
    page.on('response', (r) => {
      if (r.url().endsWith('/api/v1/auth/password')) posts.push(r.status());
    });
    await page.getByLabel('New password', { exact: true }).fill('short');
    await page.getByLabel('Repeat the new password', { exact: true }).fill('shorter');
    await page.getByRole('button', { name: 'Change password' }).click();
    await page.getByText('Enter your current password').waitFor();
    expect(await fieldError(page, 'New password')).toMatch(/at least 10 characters/);
    expect(await fieldError(page, 'Repeat the new password')).toBe('The two new passwords differ');
    expect(posts).toEqual([]);

    // A wrong current password: 403 from the server, shown on that field. (The password route is the
    // agreed contract of OWNERS.md, implemented on the security branch.)
    await page.getByLabel('Current password', { exact: true }).fill('not-my-password');
    await page.getByLabel('New password', { exact: true }).fill('second-pass-word-2');
    await page.getByLabel('Repeat the new password', { exact: true }).fill('second-pass-word-2');
    await page.getByRole('button', { name: 'Change password' }).click();
    await expect.poll(() => posts).toEqual([403]);
    expect(await fieldError(page, 'Current password')).not.toBe('');
    await shot(page, 'account-password-wrong-phone');

    // The server's own policy (400 with issues naming the field), shown on the New password field:
    // the same password again, then one the strength check refuses.
    await page.getByLabel('Current password', { exact: true }).fill('first-pass-word-1');
    await page.getByLabel('New password', { exact: true }).fill('first-pass-word-1');
    await page.getByLabel('Repeat the new password', { exact: true }).fill('first-pass-word-1');
    await page.getByRole('button', { name: 'Change password' }).click();
    await expect.poll(() => posts).toEqual([403, 400]);
    expect(await fieldError(page, 'New password')).toMatch(/different from the current one/);
    await page.getByLabel('New password', { exact: true }).fill('password1234');
    await page.getByLabel('Repeat the new password', { exact: true }).fill('password1234');
    await page.getByRole('button', { name: 'Change password' }).click();
    await expect.poll(() => posts).toEqual([403, 400, 400]);
    expect(await fieldError(page, 'New password')).toMatch(/guess|common/);
    await shot(page, 'account-password-policy-phone');

    await page.getByLabel('New password', { exact: true }).fill('second-pass-word-2');
    await page.getByLabel('Repeat the new password', { exact: true }).fill('second-pass-word-2');
    await page.getByRole('button', { name: 'Change password' }).click();
    await page.getByRole('status').filter({ hasText: 'Password changed.' }).waitFor();
    expect(posts).toEqual([403, 400, 400, 204]);
    await expect(page.getByLabel('Current password', { exact: true }).inputValue()).resolves.toBe('');
    await shot(page, 'account-password-changed-phone');

    // Wide: the same screen beside the account card.
    await page.setViewportSize(WIDE);
    await page.getByRole('heading', { name: 'Change password' }).waitFor();
    await shot(page, 'account-wide');

    // The Account screen's own Sign out (the account menu has one too).
    await page.getByRole('main').getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in/);
    await signInHere(page, 'skye.gunwale@example.org', 'first-pass-word-1');
    await page.getByText('E-mail or password is wrong, or the account is deactivated').waitFor();
    await signInHere(page, 'skye.gunwale@example.org', 'second-pass-word-2');
    await page.getByRole('navigation', { name: 'Main' }).waitFor();
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();
  });
});

describe('audit log (Team)', () => {
  it('loads the newest 50 from the server, older pages on "Load older", each entry in words', async () => {
    // Enough entries for three pages: sign-ins and sign-outs of a throw-away API session.
    const count = async () => (await admin.getJson<{ entries: unknown[] }>('/admin/audit?limit=200')).entries.length;
    while ((await count()) <= 110) {
      for (let i = 0; i < 10; i++) {
        const a = await apiAs('desk@keelson.test');
        expect((await a.postJson('/auth/logout', {})).status()).toBe(204);
        await a.dispose();
      }
    }

    const { context, page, requests, errors } = await openPage(browser, WIDE);
    await signIn(page, 'admin');
    await page.goto('/admin/audit');
    const table = page.getByRole('table', { name: 'Audit log' });
    await table.waitFor();
    const rows = table.getByRole('row');
    await expect.poll(() => rows.count()).toBe(51); // header + the first page
    await table.getByText('Ada Quarrier signed in.').first().waitFor();
    await table.getByText('Dana Whitcombe signed out.').first().waitFor();
    await shot(page, 'audit-wide');

    const pageRequests = () => requests.filter((u) => new URL(u).pathname === '/api/v1/admin/audit');
    expect(pageRequests().length).toBe(1);
    await page.getByRole('button', { name: 'Load older audit entries' }).click();
    await expect.poll(() => rows.count()).toBe(101);
    expect(new URL(pageRequests()[1]).searchParams.get('before')).toMatch(/^\d+$/);
    // Keep going to the first entry ever: the demo libraries the seed created.
    while (await page.getByRole('button', { name: 'Load older audit entries' }).isVisible()) {
      const before = await rows.count();
      await page.getByRole('button', { name: 'Load older audit entries' }).click();
      await expect.poll(() => rows.count()).toBeGreaterThan(before);
    }
    await page.getByRole('status').filter({ hasText: /That is the whole log: \d+ entries/ }).waitFor();
    await table.getByText(/created library “Harbour market \(demo\)” with edition 1 from .*600 rows/).waitFor();
    // No detail shows raw JSON.
    const texts = await table.getByRole('cell').allTextContents();
    expect(texts.filter((x) => /[{}]|":/.test(x))).toEqual([]);
    await shot(page, 'audit-oldest-wide');
    expectSameOrigin(requests);
    expect(errors).toEqual([]);
    await context.close();

    const phone = await openPage(browser, PHONE);
    await signIn(phone.page, 'admin');
    await phone.page.goto('/admin/audit');
    const list = phone.page.getByRole('list', { name: 'Audit log' });
    await list.waitFor();
    await expect.poll(() => list.getByRole('listitem').count()).toBe(50);
    await list.getByText('Ada Quarrier signed in.').first().waitFor();
    await shot(phone.page, 'audit-phone');
    expect(phone.errors).toEqual([]);
    await phone.context.close();
  });
});

describe('sign-off request with a note', () => {
  it('the researcher asks a named reviewer with a note; the note is in the reviewer’s e-mail and beside the request', async () => {
    await invitedUser('Pim Stanchion', 'pim.stanchion@example.org', 'reviewer', 'pim-reviews-runs');
    const researcher = await apiAs('researcher@keelson.test');
    const { libraries } = await researcher.getJson<{ libraries: { id: number; name: string; latestEdition: number }[] }>('/libraries');
    const harbour = libraries.find((l) => l.name === 'Harbour market (demo)')!;
    const { edition } = await researcher.getJson<{ edition: { id: number; series: { name: string; kind: string }[] } }>(
      `/libraries/${harbour.id}/editions/${harbour.latestEdition}`,
    );
    const assets = edition.series.filter((s) => s.kind === 'asset').map((s) => s.name);
    const created = await researcher.postJson('/runs', {
      editionId: edition.id,
      spec: { assets, factors: ['TIDE', 'BALLAST'], nonTraded: [], rf: 'RF', stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
    });
    expect(created.status()).toBe(201);
    const runId = ((await created.json()) as { run: { id: number; status: string } }).run.id;
    await researcher.dispose();

    const author = await openPage(browser, WIDE);
    await signIn(author.page, 'researcher');
    await author.page.goto(`/runs/${runId}`);
    await author.page.getByRole('radio', { name: 'Pim Stanchion (reviewer)' }).click();
    const note = 'Please check the drop test for BALLAST first.';
    await author.page.getByLabel('Note for the reviewer (optional)', { exact: true }).fill(note);
    const posts: string[] = [];
    author.page.on('request', (r) => {
      if (r.method() === 'POST' && r.url().endsWith(`/runs/${runId}/signoff-requests`)) posts.push(r.postData() ?? '');
    });
    await author.page.getByRole('button', { name: 'Request sign-off' }).dblclick();
    await author.page.getByRole('status').filter({ hasText: 'Request sent; the reviewer gets an e-mail.' }).waitFor();
    expect(posts.map((p) => JSON.parse(p))).toEqual([{ reviewerId: expect.any(Number), note }]);
    await author.page.getByText(`Sign-off requested from Pim Stanchion by Rhea Tolland`).waitFor();
    await author.page.getByText(`“${note}”`).waitFor();
    await shot(author.page, 'signoff-request-note-wide');
    expect(author.errors).toEqual([]);
    await author.context.close();

    // The reviewer (phone): the e-mail with the note in their own outbox on the Account screen.
    const rev = await openPage(browser, PHONE);
    await rev.page.goto('/sign-in');
    await signInHere(rev.page, 'pim.stanchion@example.org', 'pim-reviews-runs');
    await rev.page.getByRole('navigation', { name: 'Main' }).waitFor();
    await rev.page.goto('/account');
    const subject = `Sign-off requested: run #${runId}`;
    // Mail is sent in the background: reload until it has arrived.
    await expect
      .poll(async () => {
        await rev.page.reload();
        await rev.page.getByRole('heading', { name: 'Mail sent to you' }).waitFor();
        return rev.page.getByRole('button', { name: new RegExp(`^${subject}`) }).count();
      }, { timeout: 20_000 })
      .toBe(1);
    await rev.page.getByRole('button', { name: new RegExp(`^${subject}`) }).click();
    const body = rev.page.getByRole('article', { name: `Message: ${subject}` });
    await expect(body.textContent()).resolves.toContain(`Note: ${note}`);
    await body.scrollIntoViewIfNeeded();
    await shot(rev.page, 'signoff-request-mail-phone');
    expect(rev.errors).toEqual([]);
    await rev.context.close();
  });
});

describe('one press, one request', () => {
  it('a double click on "Send invitation" sends one invitation; the button is pending meanwhile', async () => {
    const { context, page, errors } = await openPage(browser, WIDE);
    await signIn(page, 'admin');
    await page.goto('/admin/invitations');
    await page.getByLabel('Invitee e-mail').fill('reef.cleat@example.org');
    await page.getByLabel('Invitee name').fill('Reef Cleat');
    const posts: string[] = [];
    page.on('request', (r) => {
      if (r.method() === 'POST' && r.url().endsWith('/api/v1/admin/invitations')) posts.push(r.headers()['idempotency-key'] ?? '');
    });
    const button = page.getByRole('button', { name: 'Send invitation' });
    await button.dblclick();
    await expect(button.getAttribute('aria-disabled')).resolves.toBe('true');
    await page.getByRole('status').filter({ hasText: 'Invitation sent to reef.cleat@example.org' }).waitFor();
    expect(posts.length).toBe(1);
    // A fresh Idempotency-Key per press: 32 hex digits.
    expect(posts[0]).toMatch(/^[0-9a-f]{32}$/);
    const { invitations } = await admin.getJson<{ invitations: { email: string }[] }>('/admin/invitations');
    expect(invitations.filter((i) => i.email === 'reef.cleat@example.org').length).toBe(1);
    await goTeamPage(page, 'Invitations');
    expect(errors).toEqual([]);
    await context.close();
  });
});
