/**
 * Initial JS payload of the web export (gzip level 9), against a bare Expo Router app built in the same run with the
 * same dependencies. Goal (issue 9): what the first screen needs ≤ 1.3× the bare app.
 *
 * "What the first screen needs" is measured, not read from index.html: each export is served by the real app factory
 * (server/app.ts: same headers, compression, single-page fallback) and opened at `/` in Chromium with an empty
 * profile and service workers blocked. Every JS file the server is asked for until the first screen is drawn is
 * counted, worker scripts included:
 *  - ours: `/` redirects to the bench, which is drawn when its New run button is on screen (that needs the local
 *    database, so the SQLite worker counts) and the sync indicator shows;
 *  - bare: its one route's text is on screen.
 * The moment is taken inside the page (a MutationObserver stamps Date.now()), so chunks that the page asks for in
 * the same instant, after drawing, are not counted. Also printed: the scripts index.html names (the figure this bench
 * gave before async routes were counted, kept for continuity), and all JS a first visit has fetched once the page
 * has been quiet for 3 s.
 */
import { spawnSync } from 'node:child_process';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { chromium, type Browser } from 'playwright-core';
import { openDatabase, type Database } from '../../db/client';
import { createApp } from '../../server/app';
import { CHROMIUM, CHROMIUM_ARGS } from '../browser/chromium';

const root = process.cwd();
const log = (...a: unknown[]) => console.error(...a);
const QUIET_MS = 3000;

interface Fetch {
  url: string;
  at: number;
}
interface Sizes {
  raw: number;
  gzip: number;
  files: string[];
}

function sizes(distDir: string, urls: string[]): Sizes {
  const files = [...new Set(urls.map((u) => new URL(u, 'http://x').pathname).filter((p) => p.endsWith('.js')))];
  let raw = 0;
  let gzip = 0;
  for (const p of files) {
    const buf = readFileSync(path.join(distDir, decodeURIComponent(p).replace(/^\//, '')));
    raw += buf.length;
    gzip += gzipSync(buf, { level: 9 }).length;
  }
  return { raw, gzip, files };
}

function indexScripts(distDir: string): string[] {
  const html = readFileSync(path.join(distDir, 'index.html'), 'utf8');
  return [...html.matchAll(/<script[^>]+src="([^"]+)"/g)].map((m) => m[1]);
}

/** Serves one export through the app factory and records when each request arrived. */
async function serve(database: Database, webDir: string): Promise<{ server: Server; url: string; fetches: Fetch[] }> {
  const app = createApp({ database, webDir, log: () => undefined });
  const fetches: Fetch[] = [];
  const server = createServer((req, res) => {
    fetches.push({ url: req.url ?? '', at: Date.now() });
    app(req, res);
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  return { server, url: `http://localhost:${(server.address() as AddressInfo).port}`, fetches };
}

/** Opens `/`, waits until every test id in `drawn` is on screen, and reports what was fetched by then and after. */
async function firstVisit(browser: Browser, database: Database, distDir: string, drawn: string[]) {
  const { server, url, fetches } = await serve(database, distDir);
  const context = await browser.newContext({ viewport: { width: 390, height: 844 }, baseURL: url, serviceWorkers: 'block' });
  try {
    // Stamps the first moment all the test ids are in the document (checked on every DOM change). Plain script
    // text: tsx would wrap named functions in a helper that does not exist inside the page.
    await context.addInitScript(`
      (function (ids) {
        function check() {
          if (window.__drawnAt !== undefined) return;
          for (var i = 0; i < ids.length; i++) if (!document.querySelector('[data-testid="' + ids[i] + '"]')) return;
          window.__drawnAt = Date.now();
        }
        new MutationObserver(check).observe(document, { subtree: true, childList: true, attributes: true });
      })(${JSON.stringify(drawn)});
    `);
    const page = await context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto('/');
    await page.waitForFunction(() => (window as any).__drawnAt !== undefined, undefined, { timeout: 120_000 });
    const drawnAt: number = await page.evaluate(() => (window as any).__drawnAt);
    // Then let the page settle: no new request for QUIET_MS.
    for (let seen = -1; seen !== fetches.length; ) {
      seen = fetches.length;
      await page.waitForTimeout(QUIET_MS);
    }
    if (errors.length) throw new Error(`page errors: ${errors.join('; ')}`);
    const js = fetches.filter((f) => new URL(f.url, url).pathname.endsWith('.js'));
    return {
      first: sizes(distDir, js.filter((f) => f.at <= drawnAt).map((f) => f.url)),
      settled: sizes(distDir, js.map((f) => f.url)),
      index: sizes(distDir, indexScripts(distDir)),
    };
  } finally {
    await context.close();
    await new Promise((r) => server.close(r));
  }
}

function exportWeb(cwd: string, outDir: string) {
  const env = { ...process.env, EXPO_OFFLINE: '1', EXPO_NO_TELEMETRY: '1', EXPO_NO_DEPENDENCY_VALIDATION: '1', CI: '1' };
  const r = spawnSync('npx', ['expo', 'export', '-p', 'web', '--output-dir', outDir], { cwd, env, stdio: ['ignore', 'ignore', 'inherit'] });
  if (r.status !== 0) throw new Error(`expo export failed in ${cwd}`);
}

/** A bare Expo Router app: one route, the same node_modules (it sits inside the checkout, so resolution walks up). */
function buildBare(): string {
  const bare = path.join(root, '.tmp', 'bare-router-app');
  rmSync(bare, { recursive: true, force: true });
  mkdirSync(path.join(bare, 'app'), { recursive: true });
  writeFileSync(path.join(bare, 'package.json'), JSON.stringify({ name: 'bare-router-app', private: true, main: 'expo-router/entry' }));
  writeFileSync(
    path.join(bare, 'app.json'),
    JSON.stringify({ expo: { name: 'bare', slug: 'bare', web: { bundler: 'metro', output: 'single' }, plugins: ['expo-router'] } }),
  );
  writeFileSync(
    path.join(bare, 'metro.config.js'),
    `const path = require('path');\nconst { getDefaultConfig } = require('expo/metro-config');\nconst config = getDefaultConfig(__dirname);\nconfig.watchFolders = [${JSON.stringify(root)}];\nconfig.resolver.nodeModulesPaths = [path.join(${JSON.stringify(root)}, 'node_modules')];\nmodule.exports = config;\n`,
  );
  writeFileSync(path.join(bare, 'app', '_layout.tsx'), `import { Slot } from 'expo-router';\nexport default function Layout() { return <Slot />; }\n`);
  writeFileSync(
    path.join(bare, 'app', 'index.tsx'),
    `import { Text } from 'react-native';\nexport default function Index() { return <Text testID="bare-hello">Hello</Text>; }\n`,
  );
  exportWeb(bare, 'dist');
  return bare;
}

const kib = (n: number) => Math.round(n / 102.4) / 10;
const names = (s: Sizes) => s.files.map((f) => path.basename(f).replace(/-[0-9a-f]{32}\.js$/, '')).join(', ');

async function main() {
  // Ours, as served (the same build the browser tests and `npm start` use).
  const build = spawnSync(process.execPath, ['server/build-web.mjs', '--if-stale'], { stdio: ['ignore', 2, 'inherit'] });
  if (build.status !== 0) throw new Error('our web export did not build');
  const bare = buildBare();

  const database = await openDatabase({ kind: 'pglite' });
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS, headless: true });
  try {
    const ours = await firstVisit(browser, database, path.join(root, 'dist'), ['new-run', 'sync-state']);
    const base = await firstVisit(browser, database, path.join(bare, 'dist'), ['bare-hello']);
    log(`ours, first screen: ${names(ours.first)}`);
    log(`ours, after ${QUIET_MS / 1000} s quiet: ${names(ours.settled)}`);
    log(`bare, first screen: ${names(base.first)}`);

    const ratio = ours.first.gzip / base.first.gzip;
    const row = (figure: string, s: Sizes, extra: object) => JSON.stringify({ figure, value: kib(s.gzip), unit: 'KiB', ...extra });
    console.log(
      row('web: JS for the first screen (gzip)', ours.first, {
        goal: '<= 1.3x bare Expo Router app',
        meetsGoal: ratio <= 1.3,
        ratio,
        note: `${ours.first.files.length} files, ${kib(ours.first.raw)} KiB raw`,
      }),
    );
    console.log(row('web: bare Expo Router app, JS for its screen (gzip)', base.first, { note: `same run, same dependencies; ${base.first.files.length} files` }));
    console.log(
      row('web: scripts named in index.html (gzip)', ours.index, {
        ratio: ours.index.gzip / base.index.gzip,
        note: `entry only, as measured before; bare ${kib(base.index.gzip)} KiB`,
      }),
    );
    console.log(row(`web: all JS of a first visit, ${QUIET_MS / 1000} s quiet (gzip)`, ours.settled, { note: `${ours.settled.files.length} files; service worker blocked` }));
  } finally {
    await browser.close();
    await database.close();
    rmSync(bare, { recursive: true, force: true });
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
