// Bench-specific steps for the browser tests (kept apart from the shared harness).
import type { Page } from 'playwright-core';

export interface SetupValues {
  label: string;
  massG?: string;
  volumeMl: string;
  estMolarMass?: string;
  estConcentration?: string;
  estPKa?: string;
  titrantM: string;
  rate: string;
  startMl?: string;
  temperatureC?: string;
}

export async function fillSetup(page: Page, v: SetupValues) {
  await page.getByTestId('screen-new-run').waitFor();
  const fill = async (id: string, value: string | undefined) => {
    if (value === undefined) return;
    const input = page.getByTestId(`setup-${id}`);
    await input.fill(value);
  };
  await fill('label', v.label);
  await fill('massG', v.massG);
  await fill('volumeMl', v.volumeMl);
  await fill('estMolarMass', v.estMolarMass);
  await fill('estConcentration', v.estConcentration);
  await fill('estPKa', v.estPKa);
  // Typed values mean typing by hand: signed in, the lab's calibrations in force are chosen otherwise.
  await page.getByTestId('setup-lot-manual').click();
  await fill('titrantM', v.titrantM);
  await page.getByTestId('setup-drip-manual').click();
  await fill('rate', v.rate);
  await fill('startMl', v.startMl);
  await fill('temperatureC', v.temperatureC);
}

/** Creates a run from the bench home and lands on its page (not started). */
export async function createRun(page: Page, v: SetupValues): Promise<string> {
  await page.getByTestId('new-run').click();
  await fillSetup(page, v);
  await page.getByTestId('create-run').click();
  await page.waitForURL('**/bench/run/**');
  await page.getByTestId('start-run').waitFor();
  return page.url().split('/bench/run/')[1];
}

/** Types a value on the bench keypad, key by key, and saves it. */
export async function typeOnKeypad(page: Page, value: string) {
  for (const ch of value) {
    const id = ch === '.' ? 'dot' : ch === '-' ? 'sign' : ch;
    await page.getByTestId(`key-${id}`).click();
  }
  await page.getByTestId('key-confirm').click();
}

/** Pointer-down on a tap target (the bench takes the time at pointer-down). */
export async function tap(page: Page, testId: 'tap-reading' | 'tap-checkpoint') {
  await page.getByTestId(testId).click();
}

export async function readingCount(page: Page): Promise<number> {
  return Number(await page.getByTestId('reading-count').innerText());
}

/** Waits (up to 15 s) until the bench shows `n` readings, i.e. every write has committed; returns what it shows. */
export async function settledReadingCount(page: Page, n: number): Promise<number> {
  await page
    .waitForFunction((k) => document.querySelector('[data-testid="reading-count"]')?.textContent === String(k), n, { timeout: 15_000 })
    .catch(() => undefined);
  return readingCount(page);
}

/** mm:ss.s → seconds */
export function clockSeconds(text: string): number {
  const [m, s] = text.trim().split(':');
  return Number(m) * 60 + Number(s);
}

/**
 * Screenshots of a whole screen whose content scrolls inside the app (a full-page shot sees only the viewport):
 * NAME.png at the top, then NAME-2.png… one viewport further each, up to `parts`.
 */
export async function shotScrolled(page: Page, name: string, shot: (p: Page, n: string) => Promise<string>, parts = 4) {
  const scrollBy = async (i: number) =>
    page.evaluate((k) => {
      const els = [...document.querySelectorAll<HTMLElement>('*')].filter((e) => {
        const o = getComputedStyle(e).overflowY;
        return (o === 'auto' || o === 'scroll') && e.scrollHeight > e.clientHeight + 4;
      });
      const el = els.sort((a, b) => b.clientHeight - a.clientHeight)[0];
      if (!el) return false;
      el.scrollTop = k * el.clientHeight * 0.9;
      return el.scrollTop + el.clientHeight < el.scrollHeight - 4 || k === 0;
    }, i);
  await scrollBy(0);
  await shot(page, name);
  for (let i = 1; i < parts; i++) {
    const more = await scrollBy(i);
    await page.waitForTimeout(100);
    await shot(page, `${name}-${i + 1}`);
    if (!more) break;
  }
  await scrollBy(0);
}
