import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

// Starts the real server process twice on one PGlite directory: the second must refuse with a clear message.
const dataDir = mkdtempSync(path.join(tmpdir(), 'halfmark-lock-'));
const procs: ReturnType<typeof spawn>[] = [];

function start(port: number) {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], {
    env: { ...process.env, PORT: String(port), DATA_DIR: dataDir, HALFMARK_DEMO: '0', WEB_DIR: '/nonexistent', DATABASE_URL: '' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  procs.push(child);
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  return { child, output: () => out, exited };
}

async function waitFor(cond: () => boolean, ms: number) {
  const until = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > until) throw new Error('timed out');
    await new Promise((r) => setTimeout(r, 100));
  }
}

afterAll(async () => {
  for (const p of procs) if (p.exitCode === null) p.kill('SIGTERM');
  await new Promise((r) => setTimeout(r, 1000));
  rmSync(dataDir, { recursive: true, force: true });
});

describe('server process', () => {
  it('refuses a second server on the same data directory, and closes cleanly on SIGTERM', async () => {
    const port = 8700 + Math.floor(Math.random() * 200);
    const first = start(port);
    await waitFor(() => first.output().includes('serving on'), 60_000);

    const second = start(port + 1);
    const code = await second.exited;
    expect(code).toBe(1);
    expect(second.output()).toContain('is in use by another Halfmark server');
    // The first server is untouched and still answers.
    const res = await fetch(`http://localhost:${port}/api/health`);
    expect(res.status).toBe(200);

    first.child.kill('SIGTERM');
    expect(await first.exited).toBe(0);
    expect(first.output()).toContain('closing Halfmark');

    // Once the first has closed, the directory can be opened again (the lock was released).
    const third = start(port + 2);
    await waitFor(() => third.output().includes('serving on'), 60_000);
    third.child.kill('SIGTERM');
    expect(await third.exited).toBe(0);
  }, 120_000);
});
