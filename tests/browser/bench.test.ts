// The bench as a chemist uses it, on the built export served by the real server.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { simulateCurve } from '../../shared/engine';
import { touch } from '../../src/theme/tokens';
import { clockSeconds, createRun, readingCount, settledReadingCount, shotScrolled, tap, typeOnKeypad, type SetupValues } from './bench-helpers';
import { closeBrowser, DESKTOP, openApp, PHONE, shot } from './harness';

afterAll(closeBrowser);

// Demo scenario (invented): about 0.1 M acetic acid, 25.00 mL, with 0.1000 M NaOH at 0.05 mL/s → break near 500 s.
// pH values typed are the engine's own forward model at the mark's time (pKa 4.756: CRC-style table, see
// shared/reference/check-values.md), so the result can be checked against the scenario's Ve of 25.00 mL.
const DEMO: SetupValues = {
  label: 'Demo: acetic acid portion A',
  volumeMl: '25',
  estConcentration: '0.1',
  estPKa: '4.756',
  titrantM: '0.1',
  rate: '0.05',
  startMl: '0.50',
  temperatureC: '25',
};
const model = (timeS: number) =>
  simulateCurve({ sample: { volumeMl: 25, concentrationM: 0.1 }, acid: { pKa: [4.756] }, titrant: { concentrationM: 0.1 }, temperatureC: 25, delivery: { rateMlPerS: 0.05 }, timesS: [timeS] }).points[0].pH;

for (const [label, viewport] of [
  ['phone', PHONE],
  ['desktop', DESKTOP],
] as const) {
  describe(`bench at ${label} width`, () => {
    it('records a whole run: set up, start, 24 readings and 2 checkpoints, finish, result, submit', async () => {
      const app = await openApp('/bench', { viewport });
      const { page } = app;
      await page.clock.install();
      await page.getByTestId('screen-bench').waitFor();
      await page.getByTestId('new-run').waitFor();
      await shot(page, `bench-home-${label}`);

      await page.getByTestId('new-run').click();
      const { fillSetup } = await import('./bench-helpers');
      await fillSetup(page, DEMO);
      await page.getByTestId('plan-break-1').waitFor();
      // Plan: 25.00 mL at 0.05 mL/s = 500 s = 08:20.0 (stoichiometry of the demo scenario).
      expect(await page.getByTestId('plan-break-1').innerText()).toContain('25.00 mL, clock 08:20.0');
      await page.getByTestId('setup-warnings').waitFor();
      expect(await page.getByTestId('setup-warnings').innerText()).toMatch(/Drip rate typed by hand/);
      await shotScrolled(page, `bench-setup-${label}`, shot);
      await page.getByTestId('create-run').click();
      await page.waitForURL('**/bench/run/**');
      await page.getByTestId('start-run').waitFor();
      await shotScrolled(page, `bench-ready-${label}`, shot);

      await page.getByTestId('start-run').click();
      await page.getByTestId('tap-reading').waitFor();
      // Readings every 25 s, 12.5 s apart around the break, to 700 s: 26 marks; two checkpoints on the way.
      const times: number[] = [];
      for (let t = 10; t <= 700; t += t > 420 && t < 580 ? 12.5 : 25) times.push(t);
      let elapsed = 0;
      let checkpoints = 0;
      for (const [i, t] of times.entries()) {
        await page.clock.fastForward(Math.round((t - elapsed) * 1000));
        elapsed = t;
        await tap(page, 'tap-reading');
        const markText = await page.getByTestId('active-mark-time').innerText();
        const markS = clockSeconds(markText);
        await typeOnKeypad(page, model(markS).toFixed(2));
        if (i === 8 || i === 20) {
          await tap(page, 'tap-checkpoint');
          const cpS = clockSeconds(await page.getByTestId('active-mark-time').innerText());
          await typeOnKeypad(page, (0.5 + 0.05 * cpS).toFixed(2));
          checkpoints++;
        }
        if (i === 12) await shot(page, `bench-live-${label}`);
      }
      expect(checkpoints).toBe(2);
      expect(await settledReadingCount(page, times.length)).toBe(times.length);
      await page.getByTestId('entry-idle').waitFor();
      expect(times.length).toBeGreaterThanOrEqual(20);
      // The live estimate has caught up with the readings.
      await page.waitForFunction(() => document.querySelector('[data-testid="estimate-ve"]')?.textContent?.includes('mL'));
      await shotScrolled(page, `bench-live-full-${label}`, shot);
      // A full table keeps one height (the newest 25 rows, in a box of 25 rows), so a value being saved does not
      // move what is below it; "show all" lists every row and lets the table grow.
      const stored = '[data-testid^="reading-row-"], [data-testid^="checkpoint-row-"]';
      const pinned = page.getByTestId('rows-pinned');
      expect((await pinned.boundingBox())?.height).toBe(25 * touch.min);
      expect(await pinned.locator(stored).count()).toBe(25);
      expect(await page.getByTestId(`reading-row-${times.length}`).isVisible()).toBe(true);
      await page.getByTestId('show-all-rows').click();
      await pinned.waitFor({ state: 'detached' });
      expect(await page.getByTestId('readings-table').locator(stored).count()).toBe(times.length + checkpoints);

      await page.getByTestId('finish-run').click();
      await page.getByTestId('confirm-finish').click();
      await page.getByTestId('screen-review').waitFor();
      const ve = await page.getByTestId('result-ve-1').innerText();
      // Scenario Ve 25.00 mL; timing taps are rounded to 0.1 s on screen and pH to 0.01, so allow 0.3 mL.
      expect(Math.abs(parseFloat(ve) - 25)).toBeLessThan(0.3);
      const pka = parseFloat(await page.getByTestId('result-pka-1').innerText());
      expect(Math.abs(pka - 4.756)).toBeLessThan(0.15);
      await page.getByTestId('result-concentration').waitFor();
      await shotScrolled(page, `bench-review-${label}`, shot);

      await page.getByTestId('run-notes').fill('Demo run; electrode rinsed between portions.');
      await page.getByTestId('save-notes').click();
      await page.getByText('Saved on this device.').waitFor();
      await page.getByTestId('submit-run').click();
      await page.getByTestId('submit-state').waitFor();
      expect(await page.getByTestId('submit-state').innerText()).toMatch(/queued for the lab \(\d+ changes waiting to sync\)/);
      await shotScrolled(page, `bench-submitted-${label}`, shot);

      // Everything came from the local database: a reload shows the same run, submitted.
      await page.reload();
      await page.getByTestId('screen-review').waitFor();
      expect(await page.getByTestId('review-state').innerText()).toMatch(/Submitted/);
      expect(await page.getByTestId('run-notes').inputValue()).toContain('electrode rinsed');
      await app.close();
    });
  });
}

describe('bench saving states', () => {
  for (const [label, viewport] of [
    ['phone', PHONE],
    ['desktop', DESKTOP],
  ] as const) {
    it(`at ${label} width shows a tap and a typed value at once as saving, confirms them on commit, and keeps the value when a write fails`, async () => {
      const app = await openApp('/bench', { viewport });
      const { page } = app;
      // The automation opt-in gives the test the page's store, to hold or fail its writes.
      await page.evaluate(() => localStorage.setItem('halfmark.automation', '1'));
      await page.reload();
      await createRun(page, { ...DEMO, label: `Demo: saving states (${label})` });
      await page.getByTestId('start-run').click();
      await page.getByTestId('tap-reading').waitFor();
      await page.evaluate(() => {
        const w = window as unknown as Record<string, unknown>;
        const s = (globalThis as unknown as { __halfmarkStore: Record<string, (...a: unknown[]) => Promise<unknown>> }).__halfmarkStore;
        const write = s.runPrepared;
        // Holds every recording write until released; or fails the next one.
        w.holdWrites = () => {
          let release = () => {};
          const gate = new Promise<void>((r) => (release = r));
          s.runPrepared = function (...a: unknown[]) {
            return gate.then(() => write.apply(this, a));
          };
          w.releaseWrites = () => {
            s.runPrepared = write;
            release();
          };
        };
        w.failNextWrite = (message: string) => {
          s.runPrepared = function () {
            s.runPrepared = write;
            return Promise.reject(new Error(message));
          };
        };
      });
      const call = (fn: string, arg?: string) => page.evaluate(([f, a]) => (window as unknown as Record<string, (x?: string) => void>)[f](a), [fn, arg] as const);

      // While the writes wait: the mark is on screen, marked as saving; typing goes on; the value shows as saving.
      await call('holdWrites');
      await tap(page, 'tap-reading');
      await page.getByTestId('mark-saving-0').waitFor();
      expect(await page.getByTestId('pending-0').getAttribute('aria-label')).toMatch(/saving the mark/);
      await shot(page, `bench-saving-mark-${label}`);
      await typeOnKeypad(page, '3.25');
      await page.getByTestId('saving-reading-1').waitFor();
      expect(await page.getByTestId('saving-reading-1').innerText()).toMatch(/3\.25[\s\S]*saving/);
      expect(await readingCount(page)).toBe(0);
      expect(await page.getByTestId('reading-row-1').count()).toBe(0);
      await page.getByTestId('saving-reading-1').scrollIntoViewIfNeeded();
      await shot(page, `bench-saving-reading-${label}`);

      // Committed: the row is stored, numbered and counted; nothing is left saving.
      await call('releaseWrites');
      expect(await settledReadingCount(page, 1)).toBe(1);
      expect(await page.getByTestId('reading-row-1').innerText()).toContain('3.25');
      expect(await page.getByTestId('saving-reading-1').count()).toBe(0);
      expect(await page.locator('[data-testid^="mark-saving-"]').count()).toBe(0);

      // A value whose write fails: the error is shown, the mark and the typed text stay, nothing is counted.
      await tap(page, 'tap-reading');
      const markTime = await page.getByTestId('active-mark-time').innerText();
      await page.locator('[data-testid^="mark-saving-"]').waitFor({ state: 'detached' });
      await call('failNextWrite', 'the device storage refused the write (test)');
      await typeOnKeypad(page, '3.40');
      await page.getByTestId('write-error').waitFor();
      expect(await page.getByTestId('write-error').innerText()).toMatch(/Not saved \(reading\): the device storage refused the write \(test\)/);
      expect(await page.getByTestId('entry-error').innerText()).toMatch(/value is kept/);
      expect(await page.getByTestId('active-mark-time').innerText()).toBe(markTime);
      expect(await page.getByTestId('entry-display').innerText()).toContain('3.40');
      expect(await page.getByTestId('saving-reading-2').count()).toBe(0);
      expect(await readingCount(page)).toBe(1);
      await page.getByTestId('entry-display').scrollIntoViewIfNeeded();
      await shot(page, `bench-save-failed-${label}`);
      // Saved on the second try, with the kept text.
      await page.getByTestId('key-confirm').click();
      expect(await settledReadingCount(page, 2)).toBe(2);
      expect(await page.getByTestId('reading-row-2').innerText()).toContain('3.40');
      await page.getByTestId('entry-idle').waitFor();

      // A mark whose own write fails goes away again, with the error shown.
      await call('failNextWrite', 'the device storage refused the mark (test)');
      await tap(page, 'tap-reading');
      await page.getByText(/Not saved \(mark\): the device storage refused the mark \(test\)/).waitFor();
      await page.getByTestId('entry-idle').waitFor();
      expect(await page.getByTestId('pending-0').count()).toBe(0);

      // What the screen confirmed is what the local database holds.
      await page.reload();
      await page.getByTestId('tap-reading').waitFor();
      expect(await settledReadingCount(page, 2)).toBe(2);
      await app.close();
    });
  }
});

describe('bench timing and storage', () => {
  it('keeps the time of the tap when the pH is typed 5 s later, with two marks pending in any order', async () => {
    const app = await openApp('/bench', { viewport: PHONE });
    const { page } = app;
    await createRun(page, { ...DEMO, label: 'Demo: timing check' });
    await page.getByTestId('start-run').click();
    await tap(page, 'tap-reading');
    await page.getByTestId('pending-0').waitFor();
    await page.waitForTimeout(1200);
    await tap(page, 'tap-reading');
    await page.getByTestId('pending-1').waitFor();
    const first = clockSeconds(await page.getByTestId('pending-0').locator('text=/\\d\\d:\\d\\d\\.\\d/').innerText());
    const second = clockSeconds(await page.getByTestId('pending-1').locator('text=/\\d\\d:\\d\\d\\.\\d/').innerText());
    expect(second - first).toBeGreaterThan(1);
    await shot(page, 'bench-pending-two-phone');
    await page.waitForTimeout(5000); // the analyst finishes reading the meter
    // Complete the second mark first.
    await page.getByTestId('pending-1').click();
    expect(clockSeconds(await page.getByTestId('active-mark-time').innerText())).toBe(second);
    await typeOnKeypad(page, '3.05');
    await typeOnKeypad(page, '2.95');
    expect(await settledReadingCount(page, 2)).toBe(2);
    const clockNow = clockSeconds(await page.getByTestId('run-clock').innerText());
    expect(clockNow - second).toBeGreaterThanOrEqual(5);
    // The table shows each reading at its mark's time, not at the time of typing.
    const row1 = await page.getByTestId('reading-row-1').innerText();
    const row2 = await page.getByTestId('reading-row-2').innerText();
    expect(row1).toContain(await formatted(first));
    expect(row1).toContain('2.95');
    expect(row2).toContain(await formatted(second));
    expect(row2).toContain('3.05');

    // A bad entry is refused with a clear message and nothing is lost.
    await tap(page, 'tap-reading');
    await typeOnKeypad(page, '');
    await page.getByTestId('entry-error').waitFor();
    expect(await page.getByTestId('entry-error').innerText()).toMatch(/Type the pH value first/);
    await shot(page, 'bench-entry-error-phone');

    // mV with no electrode calibration: kept as mV, pH empty, with a warning.
    await page.getByTestId('entry-mode-mV').click();
    await page.getByTestId('mv-warning').waitFor();
    await typeOnKeypad(page, '-123.4');
    await page.getByTestId('entry-idle').waitFor();
    expect(await page.getByTestId('reading-row-3').innerText()).toContain('-123.4 mV');

    // From the keyboard: Enter on the focused Mark target marks too; a mark tapped by mistake can be discarded.
    await page.getByTestId('tap-reading').focus();
    await page.keyboard.press('Enter');
    await page.getByTestId('active-mark-time').waitFor();
    await page.locator('[data-testid^="mark-saving-"]').waitFor({ state: 'detached' });
    // The keypad's keys work from the keyboard too (Enter or Space on the focused key), once per press.
    for (const [key, press] of [['7', 'Enter'], ['dot', ' '], ['2', 'Enter'], ['back', ' '], ['4', 'Enter']] as const) {
      await page.getByTestId(`key-${key}`).focus();
      await page.keyboard.press(press);
    }
    expect(await page.getByTestId('entry-display').getAttribute('aria-label')).toBe('Typed 7.4 mV'); // still in mV from above
    await page.getByTestId('discard-mark').click();
    await page.getByTestId('entry-idle').waitFor();

    // A correction keeps the original and needs a reason.
    await page.getByTestId('reading-row-1').click();
    await page.getByTestId('correction-value').fill('2.97');
    await page.getByTestId('correction-save').click();
    await page.getByText(/Give a reason/).waitFor();
    await page.getByTestId('correction-reason').fill('misread the last digit');
    await page.getByTestId('correction-save').click();
    await page.getByTestId('correction').waitFor({ state: 'detached' });
    expect(await page.getByTestId('reading-row-1').innerText()).toMatch(/2\.97 \*/);
    await shot(page, 'bench-corrected-phone');

    // Pause for a refill, then resume: the clock stands still meanwhile.
    await page.getByTestId('pause-run').click();
    await page.getByTestId('refill-panel').waitFor();
    const paused = await page.getByTestId('run-clock').innerText();
    await page.waitForTimeout(1500);
    expect(await page.getByTestId('run-clock').innerText()).toBe(paused);
    await page.getByTestId('refill-before').fill('45.00');
    await page.getByTestId('refill-after').fill('0.20');
    await shot(page, 'bench-paused-phone');
    await page.getByTestId('resume-run').click();
    await page.getByTestId('tap-reading').waitFor();

    // Reload restores the running clock from the stored anchors and keeps every record.
    const before = clockSeconds(await page.getByTestId('run-clock').innerText());
    await page.reload();
    await page.getByTestId('tap-reading').waitFor();
    const after = clockSeconds(await page.getByTestId('run-clock').innerText());
    expect(after).toBeGreaterThanOrEqual(before);
    expect(after - before).toBeLessThan(10);
    expect(await page.getByTestId('reading-row-1').innerText()).toMatch(/2\.97 \*/);
    expect(await readingCount(page)).toBe(3);
    await app.close();
  });

  it('opens and records offline, and keeps readings across reload and a browser restart', async () => {
    const profile = mkdtempSync(path.join(tmpdir(), 'halfmark-bench-profile-'));
    try {
      let app = await openApp('/bench', { viewport: PHONE, profileDir: profile, allowConsole: ['ERR_INTERNET_DISCONNECTED'] });
      let page = app.page;
      await page.getByTestId('new-run').waitFor();
      // The service worker controls the page once installed (clientsClaim).
      await page.waitForFunction(() => navigator.serviceWorker?.controller !== null, undefined, { timeout: 30_000 });
      await app.context.setOffline(true);
      await page.reload();
      await page.getByTestId('new-run').waitFor();
      expect(await page.evaluate(() => crossOriginIsolated)).toBe(true);
      await shot(page, 'bench-offline-home-phone');
      const runId = await createRun(page, { ...DEMO, label: 'Demo: offline portion' });
      await page.getByTestId('start-run').click();
      for (const pH of ['2.88', '3.40', '3.91']) {
        await tap(page, 'tap-reading');
        await typeOnKeypad(page, pH);
      }
      expect(await settledReadingCount(page, 3)).toBe(3);
      await page.reload();
      await page.getByTestId('tap-reading').waitFor();
      expect(await readingCount(page)).toBe(3);
      await shot(page, 'bench-offline-run-phone');
      await app.close();

      // Close the browser, open the same profile again.
      app = await openApp(`/bench/run/${runId}`, { viewport: PHONE, profileDir: profile });
      page = app.page;
      await page.getByTestId('tap-reading').waitFor();
      expect(await readingCount(page)).toBe(3);
      expect(await page.getByTestId('reading-row-3').innerText()).toContain('3.91');
      await app.close();
    } finally {
      rmSync(profile, { recursive: true, force: true });
    }
  });

  it('keeps every reading the screen confirmed when the browser is killed (SIGKILL) right after', async () => {
    const profile = mkdtempSync(path.join(tmpdir(), 'halfmark-bench-kill-'));
    try {
      let app = await openApp('/bench', { viewport: PHONE, profileDir: profile });
      let page = app.page;
      const runId = await createRun(page, { ...DEMO, label: 'Demo: browser killed' });
      await page.getByTestId('start-run').click();
      const pHs = ['2.91', '3.35', '3.62', '3.84', '4.02'];
      for (const pH of pHs) {
        await tap(page, 'tap-reading');
        await typeOnKeypad(page, pH);
      }
      // Confirmed on screen: counted, numbered, nothing left saving.
      expect(await settledReadingCount(page, pHs.length)).toBe(pHs.length);
      expect(await page.locator('[data-testid^="saving-"]').count()).toBe(0);
      expect(app.errors).toEqual([]);
      // The whole browser dies at once (no page close, no shutdown): this test started it, and kills its processes
      // by id, found by the profile folder only this browser uses.
      const pids = execFileSync('pgrep', ['-f', '--', profile], { encoding: 'utf8' }).trim().split('\n').filter(Boolean).map(Number);
      expect(pids.length).toBeGreaterThan(0);
      for (const pid of pids) {
        try {
          process.kill(pid, 'SIGKILL');
        } catch {
          /* already gone */
        }
      }
      await app.close().catch(() => undefined);

      app = await openApp(`/bench/run/${runId}`, { viewport: PHONE, profileDir: profile });
      page = app.page;
      await page.getByTestId('tap-reading').waitFor();
      expect(await settledReadingCount(page, pHs.length)).toBe(pHs.length);
      for (const [i, pH] of pHs.entries()) expect(await page.getByTestId(`reading-row-${i + 1}`).innerText()).toContain(pH);
      await app.close();
    } finally {
      rmSync(profile, { recursive: true, force: true });
    }
  });

  for (const [label, viewport] of [
    ['phone', PHONE],
    ['desktop', DESKTOP],
  ] as const) {
    it(`a second tab at ${label} width says the bench is open elsewhere, and takes over when the first closes`, async () => {
      const app = await openApp('/bench', { viewport });
      const first = app.page;
      const runId = await createRun(first, { ...DEMO, label: 'Demo: two tabs' });
      await first.getByTestId('start-run').click();
      await tap(first, 'tap-reading');
      await typeOnKeypad(first, '2.90');

      const second = await app.newTab(`/bench/run/${runId}`);
      await second.getByTestId('other-tab').waitFor();
      expect(await second.getByTestId('other-tab').innerText()).toMatch(/open in another tab/);
      await second.setViewportSize(viewport);
      await shot(second, `bench-second-tab-${label}`);
      // The first tab keeps recording undisturbed.
      await tap(first, 'tap-reading');
      await typeOnKeypad(first, '3.10');
      expect(await settledReadingCount(first, 2)).toBe(2);

      await first.close();
      await second.getByTestId('tap-reading').waitFor({ timeout: 20_000 });
      expect(await settledReadingCount(second, 2)).toBe(2);
      expect(await second.getByTestId('reading-row-2').innerText()).toContain('3.10');
      await app.close();
    });
  }
});

async function formatted(s: number): Promise<string> {
  const { formatClock } = await import('../../src/features/bench/clock');
  return formatClock(s);
}
