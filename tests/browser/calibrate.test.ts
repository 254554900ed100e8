import { readFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { closeBrowser, DESKTOP, openApp, PHONE, shot } from './harness';

afterAll(closeBrowser);

// The demo manager (server/demo/seed.ts); the demo lab holds an invented burette, NaOH lot and electrode.
async function signInAsManager(page: Page) {
  await page.goto('/sign-in');
  await page.getByTestId('sign-in-email').fill('manager@demo.halfmark.test');
  await page.getByTestId('sign-in-password').fill('demo-manager-2026');
  await page.getByTestId('sign-in-submit').click();
  try {
    await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'), { timeout: 60_000 });
  } catch (e) {
    await shot(page, 'calibrate-sign-in-failed');
    throw e;
  }
  await page.getByTestId('nav-calibrate').click();
  await page.waitForURL('**/calibrate');
  await page.getByText('Demo burette 50 mL A-07').first().waitFor();
}

describe('Calibrate, as a manager', () => {
  it('records a gravimetric drip calibration and a KHP standardisation on a phone', async () => {
    const app = await openApp('/', { viewport: PHONE });
    const { page } = app;
    await signInAsManager(page);
    // The demo seed already has a gravimetric rate in force: remember it, so the save below must change it.
    const rateBefore = (await page.getByTestId('setting-rate').first().textContent()) ?? '';

    await page.getByTestId('start-gravimetric').first().click();
    await page.getByTestId('screen-gravimetric').waitFor();
    // The page's clock is held still between Start and Stop and moved by exactly 2 s, so the three deliveries are
    // timed alike however busy the machine is (a loaded CI machine once made real 2 s waits differ by 5 %).
    await page.clock.install();
    for (const mass of ['0.0401', '0.0402', '0.0400']) {
      await page.clock.pauseAt((await page.evaluate(() => Date.now())) + 1000); // the page's (fake) time, not ours
      await page.getByTestId('grav-timer').click(); // start
      await page.clock.runFor(2000);
      await page.getByTestId('grav-timer').click(); // stop
      await page.clock.resume();
      await page.getByTestId('grav-mass').fill(mass);
      await page.getByTestId('grav-temp').fill('21,5'); // decimal comma accepted
      await page.getByTestId('grav-add').click();
    }
    // ≈ 0.040 g in ≈ 2 s → ≈ 0.02 mL/s
    const rate = await page.getByTestId('grav-rate').textContent();
    const value = Number(rate!.split(' ')[0]);
    expect(value).toBeGreaterThan(0.015);
    expect(value).toBeLessThan(0.021);
    // Three equal timings of near-equal masses: within the lab's repeatability limit, so the new rate goes in force.
    expect(await page.getByTestId('grav-acceptance').textContent()).toBe('Repeatability within the lab limit.');
    await shot(page, 'calibrate-gravimetric-phone');
    await page.getByTestId('grav-save').click();
    await page.waitForURL('**/calibrate');
    const inForce = async () => (await page.getByTestId('setting-rate').first().textContent()) ?? '';
    await expect.poll(inForce).not.toBe(rateBefore);
    expect(await inForce()).toMatch(new RegExp(`^${rate!.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} · Gravimetric`));

    await page.getByTestId('start-standardise').first().click();
    await page.getByTestId('screen-standardise').waitFor();
    // Eurachem/CITAC QUAM (3rd ed., 2012) example A2 → 0.10214 mol/L, u 0.00010 mol/L (typed M is the engine's own).
    await page.getByTestId('std-mass').fill('0.3888');
    await page.getByTestId('std-umass').fill('0.00013');
    await page.getByTestId('std-purity').fill('1.0');
    await page.getByTestId('std-upurity').fill('0.00029');
    await page.getByTestId('std-ve').fill('18.64');
    await page.getByTestId('std-uve').fill('0.013');
    await page.getByTestId('std-urep').fill('0.0005');
    const c = await page.getByTestId('std-concentration').textContent();
    // The engine's CIAAW molar mass (204.2223) differs from QUAM's 204.2212 in the 6th digit: still 0.10214.
    const [cM, uM] = c!.split(' mol/L')[0].split(' ± ').map(Number);
    expect(cM.toFixed(5)).toBe('0.10214');
    expect(uM.toFixed(5)).toBe('0.00010');
    await page.getByTestId('co2-note').waitFor();
    await shot(page, 'calibrate-standardise-phone');
    await page.getByTestId('std-save').click();
    await page.waitForURL('**/calibrate');
    await expect.poll(async () => (await page.getByText(/mean of 2 standardisations/).count())).toBe(1);
    await shot(page, 'calibrate-overview-phone');
    await app.close();
  });

  it('shows managers the history tables on a wide screen', async () => {
    const app = await openApp('/', { viewport: DESKTOP });
    const { page } = app;
    await signInAsManager(page);
    await page.getByTestId('drip-history').first().waitFor();
    await page.getByTestId('standardisation-history').first().waitFor();
    // The phone test's calibration and the demo one are both listed.
    expect(await page.getByTestId('drip-history').first().getByText('Gravimetric').count()).toBeGreaterThanOrEqual(2);
    await shot(page, 'calibrate-overview-desktop');
    await app.close();
  });

  it('attaches the certificate of the primary standard to the newest standardisation and downloads it back', async () => {
    // The browser logs the refused upload's 415 (expected below).
    const app = await openApp('/', { viewport: DESKTOP, allowConsole: ['status of 415'] });
    const { page } = app;
    await signInAsManager(page);
    const files = page.getByTestId('standardisation-files').first();
    await files.waitFor({ timeout: 30_000 });
    // A small PDF (the server checks the %PDF- signature, not the name).
    const pdf = Buffer.from('%PDF-1.4\n1 0 obj<<>>endobj\ntrailer<<>>\n%%EOF\n');
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), files.getByTestId('attach-file').click()]);
    await chooser.setFiles({ name: 'KHP certificate (demo).pdf', mimeType: 'application/pdf', buffer: pdf });
    const button = files.getByTestId('attachment-KHP certificate (demo).pdf');
    await button.waitFor({ timeout: 30_000 });
    await shot(page, 'calibrate-certificate-desktop');
    const [download] = await Promise.all([page.waitForEvent('download'), button.click()]);
    expect(readFileSync((await download.path())!).equals(pdf)).toBe(true);
    // A text file dressed as a PDF is refused with the server's reason, and nothing is added.
    const [again] = await Promise.all([page.waitForEvent('filechooser'), files.getByTestId('attach-file').click()]);
    await again.setFiles({ name: 'not really.pdf', mimeType: 'application/pdf', buffer: Buffer.from('just text') });
    await files.getByTestId('attach-error').waitFor({ timeout: 30_000 });
    expect(await files.getByTestId('attachment-not really.pdf').count()).toBe(0);
    await app.close();
  });
});
