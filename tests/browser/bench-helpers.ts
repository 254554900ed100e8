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
  await fill('titrantM', v.titrantM);
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

/** mm:ss.s → seconds */
export function clockSeconds(text: string): number {
  const [m, s] = text.trim().split(':');
  return Number(m) * 60 + Number(s);
}
