import Papa from 'papaparse';
import { readFileSync } from 'node:fs';
import type { Page } from 'playwright-core';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_USERS } from '../../server/demo/seed';
import { shotScrolled } from './bench-helpers';
import { closeBrowser, DESKTOP, openApp, PHONE, shot } from './harness';

afterAll(closeBrowser);

async function signIn(page: Page, role: 'viewer' | 'manager' | 'analyst') {
  const u = DEMO_USERS.find((d) => d.role === role)!;
  await page.goto('/sign-in');
  await page.getByTestId('sign-in-email').fill(u.email);
  await page.getByTestId('sign-in-password').fill(u.password);
  await page.getByTestId('sign-in-submit').click();
  await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
  return u;
}

/** The report's pH plot read with the crosshair and zoomed, by mouse or by keyboard; the values read are real readings. */
async function exploreCurve(page: Page, by: 'mouse' | 'keys') {
  const slider = page.getByRole('slider', { name: /pH against volume/ });
  await slider.scrollIntoViewIfNeeded();
  const readout = page.getByTestId('plot-curve-chart-readout');
  const read = async () => {
    const m = /^pH (-?[\d.]+) at ([\d.]+) mL$/.exec((await readout.innerText()).trim());
    expect(m, 'a read-out like "pH 4.756 at 12.4 mL"').not.toBeNull();
    return { pH: m![1], mL: Number(m![2]) };
  };
  const table = await page.getByTestId('readings-table').innerText();
  if (by === 'mouse') {
    const box = (await slider.boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
    const mid = await read();
    expect(table).toContain(mid.pH);
    await page.mouse.move(box.x + box.width * 0.8, box.y + box.height * 0.5);
    expect((await read()).mL).toBeGreaterThan(mid.mL);
    // Drag across the middle fifth: the view becomes that range.
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5, { steps: 4 });
    await page.mouse.move(box.x + box.width * 0.6, box.y + box.height * 0.5, { steps: 4 });
    await page.mouse.up();
    await page.getByTestId('plot-curve-chart-range').waitFor();
    const [lo, hi] = (await page.getByTestId('plot-curve-chart-range').innerText()).match(/[\d.]+/g)!.map(Number);
    expect(lo).toBeLessThan(mid.mL + 1e-9);
    expect(hi).toBeGreaterThan(lo);
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
    const zoomedRead = await read();
    expect(zoomedRead.mL).toBeGreaterThanOrEqual(lo);
    expect(zoomedRead.mL).toBeLessThanOrEqual(hi);
  } else {
    await slider.focus();
    await page.keyboard.press('Home');
    const first = await read();
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('ArrowRight');
    const third = await read();
    expect(third.mL).toBeGreaterThan(first.mL);
    expect(table).toContain(third.pH);
    expect(await slider.getAttribute('aria-valuetext')).toBe(`pH ${third.pH} at ${third.mL} mL`);
    await page.keyboard.press('+');
    await page.getByTestId('plot-curve-chart-range').waitFor();
    await page.keyboard.press('End');
    const last = await read();
    expect(last.mL).toBeGreaterThan(third.mL);
    // The zoomed view followed the crosshair to the last point.
    const [, hi] = (await page.getByTestId('plot-curve-chart-range').innerText()).match(/[\d.]+/g)!.map(Number);
    expect(hi).toBeGreaterThanOrEqual(last.mL);
  }
  // The plot's card at the top of the view: title, plot, read-out and zoom buttons in one screenshot.
  await page.getByTestId('plot-curve').evaluate((el) => el.scrollIntoView({ block: 'start' }));
}

describe('the team desk', () => {
  for (const [label, viewport] of [['desktop', DESKTOP], ['phone', PHONE]] as const) {
    it(`a viewer filters the table, opens a run, compares two, and cannot approve (${label})`, async () => {
      const app = await openApp('/', { viewport });
      const { page } = app;
      await signIn(page, 'viewer');
      await page.goto('/logbook');
      await page.getByTestId(label === 'desktop' ? 'runs-table' : 'runs-cards').waitFor();
      const rows = page.locator('[data-testid^="run-row-"]');
      await expect.poll(() => rows.count(), { timeout: 30_000 }).toBeGreaterThanOrEqual(6);
      await shotScrolled(page, `desk-logbook-${label}`, shot, 3);
      await page.getByTestId('filter-status-submitted').click();
      await expect.poll(() => rows.count(), { timeout: 30_000 }).toBe(2);
      await shot(page, `desk-logbook-filtered-${label}`);
      // The two submitted runs (analysed, awaiting review): compared, and one opened where a manager could approve.
      const ids = await rows.evaluateAll((els) => els.map((e) => e.getAttribute('data-testid')!.slice('run-row-'.length)));
      await page.getByTestId(`select-${ids[0]}`).click();
      await page.getByTestId(`select-${ids[1]}`).click();
      await page.getByTestId('compare-selected').click();
      await page.getByTestId('screen-compare').waitFor();
      const ve = page.getByTestId('compare-results').getByText(/^Ve \d+\.\d+ ± \d/);
      await expect.poll(() => ve.count(), { timeout: 30_000 }).toBe(2);
      await page.getByTestId('align-fraction').click();
      await shot(page, `desk-compare-${label}`);
      await page.goto(`/logbook/${ids[0]}`);
      await page.getByTestId('results').waitFor({ timeout: 30_000 });
      await page.getByTestId('readings-table').waitFor();
      await page.getByTestId('run-status').getByText('submitted').waitFor();
      // A manager sees the review controls on this run (the last test approves one); a viewer sees none.
      expect(await page.getByTestId('review-approve').count()).toBe(0);
      expect(await page.getByTestId('review-password').count()).toBe(0);
      await shotScrolled(page, `desk-report-${label}`, shot, 8);
      await exploreCurve(page, label === 'desktop' ? 'mouse' : 'keys');
      await shot(page, `desk-report-crosshair-${label}`);
      await app.close();
    });
  }

  it('a manager approves a submitted run after re-entering the password; a wrong password is refused', async () => {
    // The wrong password is answered 401 on purpose; the browser logs that response as a console error.
    const app = await openApp('/', { viewport: DESKTOP, allowConsole: ['401'] });
    const { page } = app;
    await signIn(page, 'manager');
    await page.goto('/logbook');
    await page.getByTestId('filter-status-submitted').click();
    const rows = page.locator('[data-testid^="run-row-"]');
    // Wait for the filtered page itself: until it arrives the previous (unfiltered) rows are still on screen.
    await expect
      .poll(async () => {
        const texts = await rows.allInnerTexts();
        return texts.length > 0 && texts.every((t) => /submitted/i.test(t));
      }, { timeout: 30_000 })
      .toBe(true);
    const id = (await rows.first().getAttribute('data-testid'))!.slice('run-row-'.length);
    await page.goto(`/logbook/${id}`);
    await page.getByTestId('review-password').fill('not the password');
    await page.getByTestId('review-approve').click();
    await page.getByTestId('review-error').waitFor();
    expect(await page.getByTestId('review-error').innerText()).toMatch(/password is not right/);
    await page.getByTestId('review-password').fill(DEMO_USERS.find((u) => u.role === 'manager')!.password);
    await page.getByTestId('review-approve').click();
    await page.getByTestId('run-status').getByText('approved').waitFor();
    await shot(page, 'desk-approved-desktop');
    await app.close();
  });

  it('an import with a bad row shows the error and imports nothing; the export CSV parses back', async () => {
    const app = await openApp('/', { viewport: DESKTOP, allowConsole: ['422'] });
    const { page } = app;
    await signIn(page, 'analyst');
    await page.goto('/logbook/import');
    const csv = ['time_s,pH', '0,3.10', '10,3.40', '20,abc', '30,4.00'].join('\n');
    await page.getByTestId('import-text').fill(csv);
    await page.getByTestId('import-mapping').waitFor();
    await page.getByTestId('map-pH-pH').click();
    await page.getByTestId('import-preview-errors').getByText('Line 4').waitFor();
    await page.getByTestId('import-sample').fill('Browser import (demo)');
    await page.getByTestId('import-submit').click();
    await page.getByTestId('import-error').getByText('nothing was imported').waitFor();
    await shot(page, 'desk-import-error-desktop');
    await page.goto('/logbook');
    await page.getByTestId('filter-search').fill('Browser import');
    await page.getByText('No run matches these filters.').waitFor();
    // Export of a demo run.
    await page.getByTestId('filter-search').fill('');
    const first = page.locator('[data-testid^="run-row-"]').first();
    await first.waitFor();
    const id = (await first.getAttribute('data-testid'))!.slice('run-row-'.length);
    await page.goto(`/logbook/${id}`);
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-readings').click()]);
    const text = readFileSync((await download.path())!, 'utf8');
    const parsed = Papa.parse<Record<string, unknown>>(text, { header: true, dynamicTyping: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.data.length).toBeGreaterThan(20);
    expect(typeof parsed.data[0].pH).toBe('number');
    await app.close();
  });

  it('an analyst attaches a photo to a run and downloads the same bytes back', async () => {
    const app = await openApp('/', { viewport: DESKTOP });
    const { page } = app;
    await signIn(page, 'analyst');
    await page.goto('/logbook');
    const first = page.locator('[data-testid^="run-row-"]').first();
    await first.waitFor();
    const id = (await first.getAttribute('data-testid'))!.slice('run-row-'.length);
    await page.goto(`/logbook/${id}`);
    await page.getByTestId('attachments').waitFor({ timeout: 30_000 });
    // A 1×1 PNG (valid signature and chunks, so the server's content check accepts it as image/png).
    const png = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==', 'base64');
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.getByTestId('attach-file').click()]);
    await chooser.setFiles({ name: 'balance-printout.png', mimeType: 'image/png', buffer: png });
    const button = page.getByTestId('attachment-balance-printout.png');
    await button.waitFor({ timeout: 30_000 });
    await shot(page, 'desk-attachment-desktop');
    const [download] = await Promise.all([page.waitForEvent('download'), button.click()]);
    expect(readFileSync((await download.path())!).equals(png)).toBe(true);
    expect(await page.getByTestId('attach-error').count()).toBe(0);
    await app.close();
  });
});
