import type { Page, Route } from 'playwright-core';
import { afterAll, describe, expect, it } from 'vitest';
import { closeBrowser, DESKTOP, openApp, PHONE, shot } from './harness';

afterAll(closeBrowser);

const sections = [
  { key: 'bench', path: '/bench', heading: 'Bench' },
  { key: 'logbook', path: '/logbook', heading: 'Logbook' },
  { key: 'calibrate', path: '/calibrate', heading: 'Calibrate' },
  { key: 'lab', path: '/lab', heading: 'Lab' },
];

describe('app shell', () => {
  for (const [label, viewport] of [
    ['phone', PHONE],
    ['desktop', DESKTOP],
  ] as const) {
    it(`shows every section at ${label} width with navigation, our fonts and cross-origin isolation`, async () => {
      const app = await openApp('/', { viewport });
      const { page } = app;
      // The root sends you to the bench.
      await page.waitForURL('**/bench');
      const nav = page.getByRole('navigation', { name: 'Sections' });
      await expect(nav.isVisible()).resolves.toBe(true);
      const navBox = await nav.boundingBox();
      if (label === 'phone') expect(navBox!.y).toBeGreaterThan(viewport.height / 2); // bottom bar
      else expect(navBox!.height).toBeGreaterThan(viewport.height / 2); // side rail

      expect(await page.evaluate(() => crossOriginIsolated)).toBe(true);
      for (const s of sections) {
        await page.getByTestId(`nav-${s.key}`).click();
        await page.waitForURL(`**${s.path}`);
        await page.getByRole('heading', { name: s.heading, exact: true }).first().waitFor();
        // Navigation targets are at least 48 px for gloved fingers.
        const box = await page.getByTestId(`nav-${s.key}`).boundingBox();
        expect(box!.height).toBeGreaterThanOrEqual(48);
        await shot(page, `shell-${s.key}-${label}`);
      }
      const fontsOk = await page.evaluate(async () => {
        await document.fonts.ready;
        return ['Inter_400Regular', 'Inter_600SemiBold', 'Inter_700Bold'].map((f) => document.fonts.check(`16px ${f}`));
      });
      expect(fontsOk).toEqual([true, true, true]);
      await app.close();
    });
  }

  // What a finger may aim at on the bench while the page is still loading its later parts.
  const TARGETS = ['nav-bench', 'nav-logbook', 'nav-calibrate', 'nav-lab', 'new-run', 'sign-out', 'sign-out-loading'];
  const targetBoxes = (page: Page) =>
    page.evaluate((ids) => {
      const out: Record<string, number[]> = {};
      for (const id of ids) {
        const r = document.querySelector(`[data-testid="${id}"]`)?.getBoundingClientRect();
        // The placeholder and the real Sign out button are one place.
        if (r) out[id.replace('-loading', '')] = [r.x, r.y, r.width, r.height].map(Math.round);
      }
      return out;
    }, TARGETS);

  for (const [label, viewport] of [
    ['phone', PHONE],
    ['desktop', DESKTOP],
  ] as const) {
    it(`holds every tap target still at ${label} width while the status area's later parts arrive`, async () => {
      // No service worker, so the test can hold back the chunk of shared code that the sync engine and the sign-out
      // button wait for (the first screen draws without it; see server/web-chunks.mjs).
      const app = await openApp('/sign-in', { viewport, blockServiceWorkers: true });
      const { page } = app;
      await page.getByTestId('sign-in-email').fill('analyst@demo.halfmark.test');
      await page.getByTestId('sign-in-password').fill('demo-analyst-2026');
      await page.getByTestId('sign-in-submit').click();
      await page.waitForURL('**/bench');
      await page.getByTestId('sign-out').waitFor();

      const held: Route[] = [];
      await page.route('**/_expo/static/js/web/__later-*.js', (route) => void held.push(route));
      await page.reload();
      await page.getByTestId('new-run').waitFor();
      await page.getByTestId('sign-out-loading').waitFor();
      await expect.poll(() => held.length).toBe(1);
      expect(await page.getByTestId('sync-state').innerText()).toBe('Sync starting');
      expect(await page.getByTestId('sign-out-loading').isDisabled()).toBe(true);
      const loading = await targetBoxes(page);
      await shot(page, `shell-lazy-loading-${label}`);

      for (const r of held) await r.continue();
      await page.getByTestId('sign-out').waitFor();
      await expect.poll(() => page.getByTestId('sync-state').innerText()).not.toBe('Sync starting');
      expect(await targetBoxes(page)).toEqual(loading);
      expect(Object.keys(loading)).toEqual(['nav-bench', 'nav-logbook', 'nav-calibrate', 'nav-lab', 'new-run', 'sign-out']);
      await shot(page, `shell-lazy-loaded-${label}`);
      await app.close();
    });
  }

  it('shows a not-found screen for an unknown address', async () => {
    const app = await openApp('/no/such/page', { viewport: PHONE });
    await app.page.getByTestId('screen-not-found').waitFor();
    await app.page.getByRole('heading', { name: 'Nothing at this address' }).waitFor();
    await shot(app.page, 'shell-not-found-phone');
    await app.close();
  });
});
