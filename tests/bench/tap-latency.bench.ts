/**
 * Bench tap latency (issue 5): a run with 2,000 readings already recorded, Chromium with 4× CPU throttling
 * (CDP Emulation.setCPUThrottlingRate). Two figures, p95 over 40 readings each, goal ≤ 50 ms:
 *  - mark: pointer-down on the Mark target → the pending mark is on screen (after the next animation frame);
 *  - reading: pointer-down on the keypad's Save → the new reading is in the table (written to the local database
 *    first, so this includes the commit).
 * Times are taken inside the page: from the pointerdown event's timeStamp to the animation frame after the DOM
 * shows the change.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { chromium } from 'playwright-core';
import { CHROMIUM, CHROMIUM_ARGS } from '../browser/chromium';

const PORT = 8292;
const SEED = 2000;
const SAMPLES = 40;
const log = (...a: unknown[]) => console.error(...a);

function p95(xs: number[]) {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil(0.95 * s.length) - 1)];
}
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

async function waitHealth(url: string) {
  for (let i = 0; i < 480; i++) {
    try {
      if ((await fetch(`${url}/api/health`)).ok) return;
    } catch {
      /* not yet */
    }
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error('server did not start');
}

async function main() {
  const b = spawnSync(process.execPath, ['server/build-web.mjs', '--if-stale'], { stdio: ['ignore', 2, 2] });
  if (b.status !== 0) throw new Error('web export failed');
  const dataDir = mkdtempSync(path.join(tmpdir(), 'halfmark-tapbench-'));
  const server = spawn('npx', ['tsx', 'server/main.ts'], { env: { ...process.env, PORT: String(PORT), DATA_DIR: dataDir, NODE_ENV: 'test', DATABASE_URL: '' }, stdio: ['ignore', 2, 2], detached: true });
  const url = `http://localhost:${PORT}`;
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS, headless: true });
  try {
    await waitHealth(url);
    const context = await browser.newContext({ viewport: { width: 390, height: 844 }, baseURL: url });
    await context.addInitScript(() => localStorage.setItem('halfmark.automation', '1'));
    const page = await context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
    await page.goto('/bench');
    await page.getByTestId('new-run').waitFor({ timeout: 60_000 });

    // Seed through the app's own store: a started run with 2,000 marks and readings (demo curve, invented).
    const t0 = Date.now();
    const runId = await page.evaluate(async (n) => {
      const store = (globalThis as any).__halfmarkStore;
      const setup = {
        label: 'Demo: long run for the tap benchmark',
        sample: { volumeMl: 25, estConcentrationM: 0.1, estPKa: [4.756] },
        titrant: { source: 'manual', concentrationM: 0.1 },
        delivery: { source: 'manual', rateMlPerS: 0.01, startBuretteMl: 0 },
        temperatureC: 25,
      };
      const run = await store.createRun({ label: setup.label, setup });
      const startMono = performance.timeOrigin + performance.now() - n * 1500 - 10_000;
      await store.addEvent(run.id, 'start', { monoMs: startMono, wallMs: Date.now() - n * 1500 - 10_000 });
      for (let i = 0; i < n; i++) {
        const t = 1 + i * 1.5;
        const v = 0.01 * t; // mL
        const pH = v < 25 ? 4.756 + Math.log10(Math.max(v, 0.05) / Math.max(25 - v, 0.05)) : 11 + (v - 25) / 10;
        const m = await store.addMark(run.id, 'reading', t, { monoMs: startMono + t * 1000, wallMs: Date.now() });
        await store.addReading(m, { pH: Math.round(Math.min(13, Math.max(2.5, pH)) * 100) / 100, mV: null, pHSource: 'typed' });
      }
      return run.id;
    }, SEED);
    log(`seeded ${SEED} readings in ${((Date.now() - t0) / 1000).toFixed(1)} s`);

    await page.goto(`/bench/run/${runId}`);
    await page.getByTestId('tap-reading').waitFor({ timeout: 60_000 });
    await page.waitForFunction((n) => document.querySelector('[data-testid="reading-count"]')?.textContent === String(n), SEED, { timeout: 60_000 });

    const cdp = await context.newCDPSession(page);
    await cdp.send('Emulation.setCPUThrottlingRate', { rate: 4 });

    // Plain script text: tsx would wrap named functions in a helper that does not exist inside the page.
    await page.evaluate(`
      window.addEventListener('pointerdown', function (e) { window.__down = e.timeStamp; }, { capture: true });
      // Resolves with ms from the last pointerdown to the frame after check() first holds.
      window.__until = function (check) {
        return new Promise(function (resolve) {
          function done() { requestAnimationFrame(function () { resolve(performance.now() - window.__down); }); }
          if (check()) return done();
          var mo = new MutationObserver(function () { if (check()) { mo.disconnect(); done(); } });
          mo.observe(document.body, { subtree: true, childList: true, characterData: true });
        });
      };
    `);

    const markMs: number[] = [];
    const readingMs: number[] = [];
    for (let i = 0; i < SAMPLES; i++) {
      const waitMark = page.evaluate(() => (window as any).__until(() => !!document.querySelector('[data-testid="active-mark-time"]')));
      await page.getByTestId('tap-reading').click();
      markMs.push(await waitMark);
      for (const k of ['9', 'dot', '5']) await page.getByTestId(`key-${k}`).click();
      const expected = SEED + i + 1;
      const waitRow = page.evaluate(
        (n) => (window as any).__until(() => document.querySelector('[data-testid="reading-count"]')?.textContent === String(n) && !!document.querySelector(`[data-testid="reading-row-${n}"]`)),
        expected,
      );
      await page.getByTestId('key-confirm').click();
      readingMs.push(await waitRow);
      await page.waitForTimeout(150);
    }
    await cdp.send('Emulation.setCPUThrottlingRate', { rate: 1 });
    if (errors.length) throw new Error(`page errors: ${errors.join('; ')}`);
    log(`mark ms: median ${median(markMs).toFixed(1)}, max ${Math.max(...markMs).toFixed(1)}`);
    log(`reading ms: median ${median(readingMs).toFixed(1)}, max ${Math.max(...readingMs).toFixed(1)}`);
    const row = (figure: string, v: number) => ({ figure, value: Math.round(v * 10) / 10, unit: 'ms', goal: '<= 50', meetsGoal: v <= 50 });
    console.log(JSON.stringify(row(`bench: tap Mark → pending mark shown, p95 (${SEED} readings, 4× CPU throttle)`, p95(markMs))));
    console.log(JSON.stringify(row(`bench: tap Save → reading in table, p95 (${SEED} readings, 4× CPU throttle)`, p95(readingMs))));
  } finally {
    await browser.close();
    if (server.pid) {
      try {
        process.kill(-server.pid, 'SIGTERM');
      } catch {
        /* gone */
      }
    }
    await new Promise((r) => setTimeout(r, 1500));
    rmSync(dataDir, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
