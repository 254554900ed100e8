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

  it('shows a not-found screen for an unknown address', async () => {
    const app = await openApp('/no/such/page', { viewport: PHONE });
    await app.page.getByTestId('screen-not-found').waitFor();
    await app.page.getByRole('heading', { name: 'Nothing at this address' }).waitFor();
    await shot(app.page, 'shell-not-found-phone');
    await app.close();
  });
});
