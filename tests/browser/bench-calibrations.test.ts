// Run setup offers the lab's calibrations (the demo seed's invented burette, NaOH lot and electrode), chooses the
// ones in force, plans with the calibrated rate, and still offers them offline from the device's copy.
import { afterAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { shotScrolled } from './bench-helpers';
import { closeBrowser, DESKTOP, openApp, PHONE, shot } from './harness';

afterAll(closeBrowser);

async function signInAsAnalyst(page: Page, name: string) {
  await page.goto('/sign-in');
  try {
    await page.getByTestId('sign-in-email').waitFor({ timeout: 90_000 });
  } catch (e) {
    await shot(page, `${name}-sign-in-not-shown`);
    throw e;
  }
  // Lets the test read the created run back from the device's store (src/local/localDb.ts, off unless set).
  await page.evaluate(() => localStorage.setItem('halfmark.automation', '1'));
  await page.getByTestId('sign-in-email').fill('analyst@demo.halfmark.test');
  await page.getByTestId('sign-in-password').fill('demo-analyst-2026');
  await page.getByTestId('sign-in-submit').click();
  try {
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 90_000 });
  } catch (e) {
    await shot(page, `${name}-sign-in-failed`);
    throw e;
  }
}

const checked = async (page: Page, testId: string, text: string) =>
  page.getByTestId(testId).filter({ hasText: text }).first().getAttribute('aria-checked');

async function expectDemoChosen(page: Page) {
  await page.getByTestId('setup-drip-option').first().waitFor({ timeout: 60_000 });
  expect(await checked(page, 'setup-drip-option', 'Demo burette 50 mL A-07')).toBe('true');
  expect(await checked(page, 'setup-lot-option', 'Demo NaOH lot D-0312')).toBe('true');
  expect(await checked(page, 'setup-electrode-option', 'Demo electrode GE-3')).toBe('true');
  expect(await page.getByTestId('setup-drip-manual').getAttribute('aria-checked')).toBe('false');
}

describe('Run setup with the lab calibrations', () => {
  for (const [label, viewport] of [
    ['phone', PHONE],
    ['desktop', DESKTOP],
  ] as const) {
    it(`chooses the calibrations in force, plans with the calibrated rate, and offers them offline (${label})`, async () => {
      const app = await openApp('/', { viewport, allowConsole: ['ERR_INTERNET_DISCONNECTED', 'Failed to load resource'] });
      const { page, context } = app;
      await signInAsAnalyst(page, `bench-calibrations-${label}`);
      await page.goto('/bench/new');
      await page.getByTestId('screen-new-run').waitFor();
      await expectDemoChosen(page);
      expect(await page.getByTestId('setup-calibrations-source').innerText()).toMatch(/fetched .*copy is kept on this device/);

      // Demo sample: 0.2442 g of benzoic acid (122.12 g/mol, from memory) → 2.000 mmol, one acidic proton.
      await page.getByTestId('setup-label').fill('Demo: benzoic acid with lab calibrations');
      await page.getByTestId('setup-massG').fill('0.2442');
      await page.getByTestId('setup-volumeMl').fill('50');
      await page.getByTestId('setup-estMolarMass').fill('122.12');
      await page.getByTestId('setup-temperatureC').fill('22');

      const dripText = await page.getByTestId('setup-drip-option').filter({ hasText: 'Demo burette' }).first().innerText();
      const lotText = await page.getByTestId('setup-lot-option').filter({ hasText: 'Demo NaOH' }).first().innerText();
      const rate = Number(/([\d.]+)(?: ± [\d.e-]+)? mL\/s/.exec(dripText)![1]);
      const conc = Number(/([\d.]+) ± [\d.e-]+ mol\/L/.exec(lotText)![1]);
      // The demo deliveries: ≈ 4.96 g of water in ≈ 249 s → ≈ 0.020 mL/s; the demo KHP standardisation ≈ 0.100 mol/L.
      expect(rate).toBeGreaterThan(0.018);
      expect(rate).toBeLessThan(0.022);
      expect(conc).toBeGreaterThan(0.09);
      expect(conc).toBeLessThan(0.11);

      const brk = await page.getByTestId('plan-break-1').innerText();
      const m = /at ([\d.]+) mL, clock (\d+):([\d.]+)/.exec(brk)!;
      const ve = Number(m[1]);
      const clockS = Number(m[2]) * 60 + Number(m[3]);
      // Ve = n / c with the chosen lot; the time to it = Ve / the chosen calibration's rate.
      expect(ve).toBeCloseTo(((0.2442 / 122.12) / conc) * 1000, 1);
      expect(Math.abs(clockS - ve / rate)).toBeLessThan(0.5);

      const warnings = (await page.getByTestId('setup-warnings').count()) ? await page.getByTestId('setup-warnings').innerText() : '';
      expect(warnings).not.toMatch(/typed by hand/);
      await shotScrolled(page, `bench-calibrations-setup-${label}`, shot, 6);

      // The run keeps which calibrations it used.
      await page.getByTestId('create-run').click();
      await page.waitForURL('**/bench/run/**');
      const setup = await page.evaluate(async () => {
        const store = (globalThis as { __halfmarkStore?: { listRuns(): Promise<{ label: string; setup: any }[]> } }).__halfmarkStore!;
        const runs = await store.listRuns();
        return runs.find((r) => r.label === 'Demo: benzoic acid with lab calibrations')!.setup;
      });
      expect(setup.delivery.source).toBe('lab');
      expect(setup.delivery.rateMlPerS).toBeCloseTo(rate, 5); // shown to 4 significant figures
      expect(typeof setup.delivery.calibrationId).toBe('string');
      expect(setup.titrant).toMatchObject({ source: 'lab' });
      expect(setup.titrant.standardisationIds.length).toBeGreaterThan(0);
      expect(setup.electrode).toMatchObject({ source: 'lab' });
      expect(typeof setup.electrode.calibrationId).toBe('string');

      // Offline: the service worker serves the app, the device's copy serves the calibrations.
      // Once the worker is active, a page not yet claimed by it is taken over at its next load.
      await page.evaluate(() => navigator.serviceWorker.ready.then(() => undefined));
      if (!(await page.evaluate(() => navigator.serviceWorker.controller !== null))) await page.reload();
      await page.waitForFunction(() => navigator.serviceWorker?.controller !== null, undefined, { timeout: 30_000 });
      await context.setOffline(true);
      await page.goto('/bench/new');
      await page.getByTestId('screen-new-run').waitFor();
      await expectDemoChosen(page);
      expect(await page.getByTestId('setup-calibrations-source').innerText()).toMatch(/Offline: .*kept on this device, fetched/);
      await page.getByTestId('setup-drip-manual').click();
      await page.getByTestId('setup-rate').waitFor();
      await page.getByTestId('setup-label').fill('Demo: typed rate');
      await page.getByTestId('setup-volumeMl').fill('50');
      await page.getByTestId('setup-rate').fill('0.03');
      await expect.poll(async () => (await page.getByTestId('setup-warnings').count()) && page.getByTestId('setup-warnings').innerText()).toMatch(/Drip rate typed by hand/);
      await page.getByTestId('setup-drip-option').first().click();
      await shotScrolled(page, `bench-calibrations-offline-${label}`, shot, 6);
      await app.close();
    });
  }
});
