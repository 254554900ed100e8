import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { inject } from 'vitest';
import { CHROMIUM, CHROMIUM_ARGS } from './chromium';

export const PHONE = { width: 390, height: 844 } as const;
export const DESKTOP = { width: 1280, height: 800 } as const;
export type Viewport = { width: number; height: number };

export const SCREENSHOTS = path.resolve('tests/screenshots');

export function baseURL(): string {
  return inject('baseURL');
}

/** Collects page errors and console errors; a test fails on any of them (see AppSession.close). */
export function watchErrors(page: Page, errors: string[]): void {
  page.on('pageerror', (err) => errors.push(`page error: ${err.message}`));
  page.on('console', (msg) => {
    if (msg.type() === 'error') errors.push(`console error: ${msg.text()}`);
  });
}

export interface AppSession {
  context: BrowserContext;
  page: Page;
  errors: string[];
  /** Opens another page in the same context (a second tab), watched for errors too. */
  newTab(pathname?: string): Promise<Page>;
  /** Closes everything; throws if a page error or console error happened, so the test fails. */
  close(): Promise<void>;
}

let shared: Browser | undefined;
async function browser(): Promise<Browser> {
  shared ??= await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS, headless: true });
  return shared;
}

export async function closeBrowser(): Promise<void> {
  await shared?.close();
  shared = undefined;
}

export interface OpenOptions {
  viewport?: Viewport;
  /** A profile folder kept on disk: storage (OPFS, SQLite) survives closing and reopening the browser. */
  profileDir?: string;
  /** Console error texts that are expected in this test (matched as substrings), e.g. while offline. */
  allowConsole?: string[];
  /** No service worker: every request then reaches page.route (the worker would answer from its cache). */
  blockServiceWorkers?: boolean;
  /** Script run in every page before the app's own (e.g. a device clock set days off). */
  initScript?: string;
}

export async function openApp(pathname = '/', opts: OpenOptions = {}): Promise<AppSession> {
  const viewport = opts.viewport ?? PHONE;
  const errors: string[] = [];
  let persistent: BrowserContext | undefined;
  let context: BrowserContext;
  const serviceWorkers = opts.blockServiceWorkers ? 'block' : 'allow';
  if (opts.profileDir) {
    persistent = await chromium.launchPersistentContext(opts.profileDir, {
      executablePath: CHROMIUM,
      args: CHROMIUM_ARGS,
      headless: true,
      viewport,
      baseURL: baseURL(),
      serviceWorkers,
    });
    context = persistent;
  } else {
    context = await (await browser()).newContext({ viewport, baseURL: baseURL(), serviceWorkers });
  }
  if (opts.initScript) await context.addInitScript(opts.initScript);
  const watch = (p: Page) => watchErrors(p, errors);
  const page = context.pages()[0] ?? (await context.newPage());
  watch(page);
  await page.goto(pathname);
  return {
    context,
    page,
    errors,
    async newTab(p = '/') {
      const tab = await context.newPage();
      watch(tab);
      await tab.goto(p);
      return tab;
    },
    async close() {
      await context.close();
      const allowed = opts.allowConsole ?? [];
      const real = errors.filter((e) => !allowed.some((a) => e.includes(a)));
      if (real.length) throw new Error(`The page reported errors:\n${real.join('\n')}`);
    },
  };
}

/** Saves a screenshot into tests/screenshots/NAME.png (git-ignored); look at them. */
export async function shot(page: Page, name: string): Promise<string> {
  mkdirSync(SCREENSHOTS, { recursive: true });
  const file = path.join(SCREENSHOTS, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}
