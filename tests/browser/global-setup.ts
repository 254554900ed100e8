import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { TestProject } from 'vitest/node';
import { CHROMIUM } from './chromium';

declare module 'vitest' {
  export interface ProvidedContext {
    baseURL: string;
    dataDir: string;
  }
}

let server: ChildProcess | undefined;
let dataDir: string | undefined;

async function waitForHealth(url: string, ms: number) {
  const until = Date.now() + ms;
  let last: unknown;
  while (Date.now() < until) {
    try {
      const res = await fetch(`${url}/api/health`);
      if (res.ok) return;
    } catch (err) {
      last = err;
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`The server did not answer /api/health within ${ms} ms: ${String(last)}`);
}

export async function setup(project: TestProject) {
  if (!existsSync(CHROMIUM)) {
    throw new Error(`Chromium is missing at ${CHROMIUM}. Install it with: apt-get install -y chromium (npm test does this when run as root).`);
  }
  const build = spawnSync(process.execPath, ['server/build-web.mjs', '--if-stale'], { stdio: 'inherit' });
  if (build.status !== 0) throw new Error('The web export did not build.');

  dataDir = mkdtempSync(path.join(tmpdir(), 'halfmark-browser-'));
  const port = 8400 + Math.floor(Math.random() * 400);
  const baseURL = `http://localhost:${port}`;
  server = spawn('npx', ['tsx', 'server/main.ts'], {
    env: { ...process.env, PORT: String(port), DATA_DIR: dataDir, NODE_ENV: 'test', DATABASE_URL: '' },
    stdio: ['ignore', 'inherit', 'inherit'],
    detached: true,
  });
  // A fresh data directory, migrations, the demo seed (hashes, analysed demo runs): slow on a loaded 2-core machine.
  await waitForHealth(baseURL, 240_000);
  project.provide('baseURL', baseURL);
  project.provide('dataDir', dataDir);
}

export async function teardown() {
  if (server?.pid) {
    try {
      process.kill(-server.pid, 'SIGTERM');
    } catch {
      /* already gone */
    }
    await new Promise((r) => setTimeout(r, 1500));
  }
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
}
