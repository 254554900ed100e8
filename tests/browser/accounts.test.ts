import type { Page } from 'playwright-core';
import { afterAll, describe, expect, it } from 'vitest';
import { baseURL, closeBrowser, DESKTOP, openApp, PHONE, shot, type Viewport } from './harness';

/**
 * Accounts end to end in the browser against the real server with the demo seed (server/demo/seed.ts): invitation
 * and password reset, following the links read from the captured e-mail (the development mailbox).
 */
afterAll(closeBrowser);

const MANAGER = { email: 'manager@demo.halfmark.test', password: 'demo-manager-2026' };
const VIEWER = { email: 'viewer@demo.halfmark.test', password: 'demo-viewer-2026' };
const run = Date.now().toString(36);

interface Captured {
  to: string[];
  subject: string;
  text: string | null;
}

/** Waits for a message to `to` whose subject matches, in the dev mailbox's JSON, and returns the link in it. */
async function linkFromMailbox(to: string, kind: 'invite' | 'reset', after = 0): Promise<string> {
  const until = Date.now() + 30_000;
  while (Date.now() < until) {
    const res = await fetch(`${baseURL()}/api/dev/mailbox`, { headers: { accept: 'application/json' } });
    expect(res.status).toBe(200);
    const { messages } = (await res.json()) as { messages: Captured[] };
    const mine = messages.filter((m) => m.to.includes(to));
    if (mine.length > after) {
      const texts = mine.map((m) => m.text ?? '');
      const m = texts.map((t) => new RegExp(`(https?://[^\\s]+/${kind}/[A-Za-z0-9_-]+)`).exec(t)).find(Boolean);
      if (m) return m[1];
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`no ${kind} e-mail to ${to} in the dev mailbox`);
}

async function mailCount(to: string): Promise<number> {
  const res = await fetch(`${baseURL()}/api/dev/mailbox`, { headers: { accept: 'application/json' } });
  const { messages } = (await res.json()) as { messages: Captured[] };
  return messages.filter((m) => m.to.includes(to)).length;
}

async function signIn(page: Page, who: { email: string; password: string }) {
  await page.getByTestId('screen-sign-in').waitFor();
  await page.getByTestId('sign-in-email').fill(who.email);
  await page.getByTestId('sign-in-password').fill(who.password);
  await page.getByTestId('sign-in-submit').click();
}

async function openLab(page: Page) {
  await page.getByTestId('nav-lab').click();
  await page.waitForURL('**/lab');
  await page.getByTestId('lab-members').getByText('@demo.halfmark.test').first().waitFor();
}

const views: [string, Viewport][] = [
  ['phone', PHONE],
  ['desktop', DESKTOP],
];

/**
 * A form's full-width button spans the form: on a desk screen the form keeps a readable width (at most 560 px with its
 * padding) and sits in the middle of the content area; on a phone it fills the width.
 */
async function expectFormWidth(page: Page, buttonTestId: string, label: string) {
  const button = (await page.getByTestId(buttonTestId).boundingBox())!;
  if (label === 'phone') {
    expect(button.width).toBeGreaterThan(PHONE.width * 0.75);
    return;
  }
  expect(button.width).toBeLessThanOrEqual(560);
  const main = (await page.locator('[data-testid^="screen-"]').first().boundingBox())!;
  const gap = Math.abs(button.x + button.width / 2 - (main.x + main.width / 2));
  expect(gap, 'centred in the content area').toBeLessThan(4);
}

describe('accounts in the browser', () => {
  it('sign-in screen at phone and desktop width', async () => {
    for (const [label, viewport] of views) {
      const app = await openApp('/sign-in', { viewport });
      await app.page.getByTestId('screen-sign-in').waitFor();
      await app.page.getByTestId('status-sign-in').waitFor(); // the shell says nobody is signed in
      await shot(app.page, `accounts-sign-in-${label}`);
      await expectFormWidth(app.page, 'sign-in-submit', label);
      await app.close();
    }
  });

  it('a manager invites an address; the invitee follows the e-mailed link, sets a password and is signed in as analyst', async () => {
    const invitee = `new.analyst.${run}@example.org`;
    const mgr = await openApp('/sign-in', { viewport: DESKTOP });
    await signIn(mgr.page, MANAGER);
    await mgr.page.waitForURL('**/bench');
    // The shell shows who is signed in, the lab and that it is the demo lab.
    await expect(mgr.page.getByTestId('account-name').textContent()).resolves.toBe('Demo Manager (Sasha)');
    await expect(mgr.page.getByTestId('account-lab').textContent()).resolves.toContain('Demo lab');
    await mgr.page.getByTestId('account-demo').waitFor();
    await openLab(mgr.page);
    await mgr.page.getByTestId('lab-invitations').waitFor();
    await mgr.page.getByTestId('invite-email').fill(invitee);
    await mgr.page.getByTestId('invite-role').getByText('Analyst', { exact: true }).click();
    await mgr.page.getByTestId('invite-send').click();
    await mgr.page.getByText(`Invitation sent to ${invitee}.`).waitFor();
    await mgr.page.getByTestId(`invitation-${invitee}`).waitFor();
    await shot(mgr.page, 'accounts-lab-manager-desktop');

    const link = await linkFromMailbox(invitee, 'invite');
    expect(link.startsWith(`${baseURL()}/invite/`)).toBe(true);

    // A fresh browser context: nothing shared with the manager's session.
    // The refused weak password answers 400, which the browser logs as a failed load.
    const inv = await openApp(new URL(link).pathname, { viewport: PHONE, allowConsole: ['status of 400'] });
    await inv.page.getByRole('heading', { name: 'Join Demo lab (invented data)' }).waitFor();
    await inv.page.getByText(`invited ${invitee} as analyst`).waitFor();
    await shot(inv.page, 'accounts-invitation-phone');
    await inv.page.getByTestId('invite-name').fill('Robin Test');
    // A very common password is refused with a clear message and the form stays filled.
    await inv.page.getByTestId('invite-password').fill('password123');
    await inv.page.getByTestId('invite-submit').click();
    await inv.page.getByText('common', { exact: false }).first().waitFor();
    await shot(inv.page, 'accounts-invitation-weak-phone');
    await inv.page.getByTestId('invite-password').fill(`titration bench ${run}`);
    await inv.page.getByTestId('invite-submit').click();
    await inv.page.waitForURL('**/lab');
    await expect(inv.page.getByTestId('account-name').textContent()).resolves.toBe('Robin Test');
    await expect(inv.page.getByTestId('account-lab').textContent()).resolves.toContain('analyst');
    await inv.page.getByTestId(`member-${invitee}`).waitFor();
    // An analyst sees no manager actions.
    expect(await inv.page.getByTestId('lab-invitations').count()).toBe(0);
    expect(await inv.page.getByTestId(`role-${MANAGER.email}`).count()).toBe(0);
    await shot(inv.page, 'accounts-invitee-lab-phone');
    // The session survives a reload (refresh cookie).
    await inv.page.reload();
    await inv.page.getByTestId(`member-${invitee}`).waitFor();
    await inv.close();

    // The manager sees the newcomer among the members and the invitation gone.
    await mgr.page.reload();
    await mgr.page.getByTestId(`member-${invitee}`).waitFor();
    expect(await mgr.page.getByTestId(`invitation-${invitee}`).count()).toBe(0);
    await mgr.close();
  });

  it('forgot password: link from the mailbox, new password signs in, the old one no longer works', { timeout: 300_000 }, async () => {
    const email = `reset.me.${run}@example.org`;
    const first = `first password ${run}`;
    const second = `second password ${run}`;
    // Someone to reset: invited by the manager through the API, so this test does not depend on the one above.
    const login = await fetch(`${baseURL()}/api/auth/login`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(MANAGER),
    });
    expect(login.status).toBe(200);
    const s = (await login.json()) as { accessToken: string; labs: { labId: string }[] };
    const invited = await fetch(`${baseURL()}/api/labs/${s.labs[0].labId}/invitations`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', authorization: `Bearer ${s.accessToken}` },
      body: JSON.stringify({ email, role: 'viewer' }),
    });
    expect(invited.status).toBe(201);
    const token = new URL(await linkFromMailbox(email, 'invite')).pathname.split('/').pop();
    const accepted = await fetch(`${baseURL()}/api/auth/invitations/${token}/accept`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ displayName: 'Reset Tester', password: first }),
    });
    expect(accepted.status).toBe(200);

    const before = await mailCount(email);
    const app = await openApp('/sign-in', { viewport: PHONE });
    await app.page.getByText('Forgot your password?').click();
    await app.page.getByRole('heading', { name: 'Reset your password' }).waitFor();
    await app.page.getByTestId('sign-in-email').fill(email);
    await app.page.getByTestId('sign-in-submit').click();
    await app.page.getByText('If that address has an account, a reset link is on its way.').waitFor();
    await shot(app.page, 'accounts-forgot-sent-phone');
    await app.close();

    const link = await linkFromMailbox(email, 'reset', before);
    expect(link.startsWith(`${baseURL()}/reset/`)).toBe(true);
    for (const [label, viewport] of views) {
      const r = await openApp(new URL(link).pathname, { viewport });
      await r.page.getByTestId('screen-reset').waitFor();
      await shot(r.page, `accounts-reset-${label}`);
      await expectFormWidth(r.page, 'reset-submit', label);
      if (label === 'phone') {
        // Too short: a clear message before anything is sent.
        await r.page.getByTestId('reset-password').fill('short');
        await r.page.getByTestId('reset-submit').click();
        await r.page.getByText('Use at least 8 characters.').waitFor();
        await r.page.getByTestId('reset-password').fill(second);
        await r.page.getByTestId('reset-submit').click();
        await r.page.waitForURL('**/bench');
        await expect(r.page.getByTestId('account-name').textContent()).resolves.toBe('Reset Tester');
      }
      await r.close();
    }

    // The link works once.
    const again = await openApp(new URL(link).pathname, { viewport: PHONE, allowConsole: ['status of 400'] });
    await again.page.getByTestId('reset-password').fill(`third password ${run}`);
    await again.page.getByTestId('reset-submit').click();
    await again.page.getByText('This reset link has been used or has expired.', { exact: false }).waitFor();
    await again.close();

    const old = await openApp('/sign-in', { viewport: PHONE, allowConsole: ['status of 401'] });
    await signIn(old.page, { email, password: first });
    await old.page.getByText('That e-mail and password do not match an account.').waitFor();
    await shot(old.page, 'accounts-old-password-refused-phone');
    await old.page.getByTestId('sign-in-password').fill(second);
    await old.page.getByTestId('sign-in-submit').click();
    await old.page.waitForURL('**/bench');
    await expect(old.page.getByTestId('account-lab').textContent()).resolves.toContain('viewer');
    await old.close();
  });

  it('a viewer sees the members but no manager actions', async () => {
    for (const [label, viewport] of views) {
      const app = await openApp('/sign-in', { viewport });
      await signIn(app.page, VIEWER);
      await app.page.waitForURL('**/bench');
      await openLab(app.page);
      await app.page.getByTestId(`member-${MANAGER.email}`).waitFor();
      await expect(app.page.getByTestId('account-lab').textContent()).resolves.toContain('viewer');
      expect(await app.page.getByTestId('lab-invitations').count()).toBe(0);
      expect(await app.page.getByTestId('lab-audit').count()).toBe(0);
      expect(await app.page.getByTestId(`role-${MANAGER.email}`).count()).toBe(0);
      expect(await app.page.getByTestId(`disable-${MANAGER.email}`).count()).toBe(0);
      await shot(app.page, `accounts-lab-viewer-${label}`);
      // Sign out from the shell: back to sign-in, the lab section asks to sign in.
      await app.page.getByTestId('sign-out').click();
      await app.page.waitForURL('**/sign-in');
      await app.page.getByTestId('status-sign-in').waitFor();
      await app.close();
    }
  });

  it('manager lab section at phone width', async () => {
    const app = await openApp('/sign-in', { viewport: PHONE });
    await signIn(app.page, MANAGER);
    await app.page.waitForURL('**/bench');
    await openLab(app.page);
    await app.page.getByTestId('lab-audit').waitFor();
    await shot(app.page, 'accounts-lab-manager-phone');
    await app.close();
  });

  it('when the server ends the session, a calm banner asks to sign in again and the kept session stays', async () => {
    const app = await openApp('/sign-in', { viewport: PHONE, allowConsole: ['status of 401'] });
    await signIn(app.page, VIEWER);
    await app.page.waitForURL('**/bench');
    // End the session on the server behind the page's back (as a password reset or "disable" would).
    await app.context.request.post(`${baseURL()}/api/auth/logout`);
    await app.page.reload();
    await app.page.getByTestId('session-ended-banner').waitFor();
    // Who was signed in is kept (recording goes on locally with the last session).
    await expect(app.page.getByTestId('account-name').textContent()).resolves.toBe('Demo Viewer (Kit)');
    await shot(app.page, 'accounts-session-ended-phone');
    await app.page.getByTestId('session-sign-in').click();
    await signIn(app.page, VIEWER);
    await app.page.waitForURL('**/bench');
    expect(await app.page.getByTestId('session-ended-banner').count()).toBe(0);
    await app.close();
  });
});
