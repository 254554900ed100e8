// Sync in the browser, on the built export served by the real server: the page is killed in the middle of a sync
// (the server has committed the push, the answer never reaches the page), the persistent profile is reopened, and
// the next sync leaves every reading on the server exactly once. A device whose clock is days off records and
// syncs as usual, and the offset is flagged on the device and on the run report.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Page, Route } from 'playwright-core';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_USERS } from '../../server/demo/seed';
import { createRun, settledReadingCount, tap, typeOnKeypad, type SetupValues } from './bench-helpers';
import { baseURL, closeBrowser, openApp, shot } from './harness';

afterAll(closeBrowser);

const analyst = DEMO_USERS.find((u) => u.role === 'analyst')!;
// Demo scenario (invented).
const DEMO: SetupValues = { label: 'Demo: sync kill test', volumeMl: '25', estConcentration: '0.1', estPKa: '4.756', titrantM: '0.1', rate: '0.05', startMl: '0.50' };

async function signIn(page: Page) {
  await page.goto('/sign-in');
  await page.getByTestId('sign-in-email').fill(analyst.email);
  await page.getByTestId('sign-in-password').fill(analyst.password);
  await page.getByTestId('sign-in-submit').click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 90_000 });
}

/** Every reading id of a run as the server has it (through the API, as a colleague would pull it). */
async function serverReadings(runId: string): Promise<string[]> {
  const login = await fetch(`${baseURL()}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email: analyst.email, password: analyst.password }),
  });
  const { accessToken } = (await login.json()) as { accessToken: string };
  const ids: string[] = [];
  let cursor = 0;
  for (;;) {
    const res = await fetch(`${baseURL()}/api/sync/pull?cursor=${cursor}&limit=5000`, { headers: { authorization: `Bearer ${accessToken}` } });
    const page = (await res.json()) as { changes: { entity: string; record: { id: string; runId: string } }[]; cursor: number; more: boolean };
    for (const c of page.changes) if (c.entity === 'reading' && c.record.runId === runId) ids.push(c.record.id);
    cursor = page.cursor;
    if (!page.more) return ids;
  }
}

describe('sync in the browser', () => {
  it('page killed mid-sync after the server committed: reopened profile syncs, nothing lost or doubled', async () => {
    const profileDir = mkdtempSync(path.join(tmpdir(), 'halfmark-sync-profile-'));
    try {
      // Expected while the page is closed mid-request and the next one retries; the MIME message appears when the
      // shared export is rebuilt by another run while this one is open (seen here; not a sync matter).
      const allow = { allowConsole: ['Failed to load resource', 'net::ERR', '[sync]', 'unsupported MIME type'] };
      const first = await openApp('/sign-in', { profileDir, ...allow });
      const { page, context } = first;
      await signIn(page);

      // Hold the first push that carries readings: it reaches the server (which commits), but its answer never
      // reaches the page. Pushes before it (the run itself, its start) go through as usual.
      let committed: (() => void) | null = null;
      let held = false;
      const pushed = new Promise<void>((r) => (committed = r));
      await context.route('**/api/sync/push', async (route: Route) => {
        // Readings go one by one in `changes` or, as the app sends new ones, in blocks (`readings`).
        const body = JSON.parse(route.request().postData() ?? '{}') as { changes?: { kind: string }[]; readings?: unknown[] };
        const carriesReadings = (body.changes ?? []).some((c) => c.kind === 'reading') || (body.readings ?? []).length > 0;
        if (held || !carriesReadings) return route.continue();
        held = true;
        await route.fetch();
        committed!();
        // No fulfil: the page is closed while waiting for this answer.
      });

      await page.goto('/bench');
      const runId = await createRun(page, DEMO);
      await page.getByTestId('start-run').click();
      const pHs = ['3.10', '3.45', '3.80', '4.20', '4.55', '4.90'];
      for (const pH of pHs) {
        await tap(page, 'tap-reading');
        await typeOnKeypad(page, pH);
      }
      expect(await settledReadingCount(page, pHs.length)).toBe(pHs.length);
      // The engine syncs periodically (15 s) and on events; wait for the held push to have committed.
      await Promise.race([pushed, new Promise((_, rej) => setTimeout(() => rej(new Error('no push within 60 s')), 60_000))]);
      await first.close();

      // The replay case: readings the server committed whose acknowledgement the page never saw.
      const committedIds = await serverReadings(runId);
      expect(committedIds.length, 'the held push committed readings').toBeGreaterThan(0);
      // Reopen the same profile: the outbox is still there; the next sync replays and completes.
      const second = await openApp('/bench', { profileDir, ...allow });
      await second.page.getByTestId('sync-state').waitFor();
      await second.page.waitForFunction(() => document.querySelector('[data-testid="sync-state"]')?.textContent === 'All synced', null, { timeout: 90_000 });
      const finalIds = await serverReadings(runId);
      expect(finalIds.length, 'each reading once').toBe(new Set(finalIds).size);
      expect(finalIds.length, 'every reading on the server').toBe(pHs.length);
      for (const id of committedIds) expect(finalIds).toContain(id);
      await second.close();
    } finally {
      rmSync(profileDir, { recursive: true, force: true });
    }
  }, 300_000);

  it('a device clock three days ahead: readings accepted in run-clock order, the offset flagged on the device and on the run report', async () => {
    const skewMs = 3 * 86_400_000;
    // The device's calendar only: Date runs three days ahead; the run clock (performance.now) is untouched.
    const initScript = `(() => {
      const skew = ${skewMs}; const Real = Date;
      class DeviceDate extends Real { constructor(...a) { if (a.length === 0) super(Real.now() + skew); else super(...a); } static now() { return Real.now() + skew; } }
      globalThis.Date = DeviceDate;
    })()`;
    const session = await openApp('/sign-in', { initScript });
    const { page } = session;
    expect(await page.evaluate(() => Date.now() - performance.timeOrigin - performance.now())).toBeGreaterThan(skewMs - 60_000);
    await signIn(page);
    await page.goto('/bench');
    const runId = await createRun(page, { ...DEMO, label: 'Demo: device clock days off' });
    await page.getByTestId('start-run').click();
    const pHs = ['3.20', '3.70', '4.10', '4.60'];
    for (const pH of pHs) {
      await tap(page, 'tap-reading');
      await typeOnKeypad(page, pH);
    }
    expect(await settledReadingCount(page, pHs.length)).toBe(pHs.length);
    await page.waitForFunction(() => document.querySelector('[data-testid="sync-state"]')?.textContent === 'All synced · clock off', null, { timeout: 90_000 });
    await page.getByTestId('sync-state').click();
    await expect.poll(() => page.getByTestId('sync-clock-flag').textContent()).toContain("about 3 days ahead of the server's");
    await shot(page, 'sync-clock-off-phone');

    // Every reading on the server once, in the order they were tapped (by run time), whatever the device's calendar.
    const ids = await serverReadings(runId);
    expect(ids.length).toBe(pHs.length);
    const login = await fetch(`${baseURL()}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: analyst.email, password: analyst.password }) });
    const { accessToken } = (await login.json()) as { accessToken: string };
    const detail = (await (await fetch(`${baseURL()}/api/runs/${runId}`, { headers: { authorization: `Bearer ${accessToken}` } })).json()) as {
      readings: { timeS: number; pH: number }[];
      clockFlags: { offsetMs: number }[];
    };
    expect(detail.readings.map((r) => r.pH.toFixed(2))).toEqual(pHs);
    const times = detail.readings.map((r) => r.timeS);
    expect(times).toEqual([...times].sort((a, b) => a - b));
    expect(detail.clockFlags).toHaveLength(1);
    expect(Math.abs(detail.clockFlags[0].offsetMs - skewMs)).toBeLessThan(60_000);

    // The run report says so to whoever reads it.
    await page.goto(`/logbook/${runId}`);
    await expect.poll(() => page.getByTestId('clock-flag').textContent(), { timeout: 30_000 }).toContain("about 3 days ahead of the server's");
    await shot(page, 'run-report-clock-off-phone');
    await session.close();
  }, 300_000);
});
