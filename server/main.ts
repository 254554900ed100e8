import type { Server } from 'node:http';
import { openDatabase, type Database } from '../db/client';
import { createApp } from './app';
import { loadConfig } from './config';
import { existsSync } from 'node:fs';
import path from 'node:path';
import { DEMO_LAB_NAME, DEMO_USERS, demoPasswordHashes, isEmpty, seedDemo } from './demo/seed';
import { DataDirLockedError, lockDataDir } from './lock';
import { startMail } from './mail';

async function main() {
  const config = loadConfig();
  // Where start-up time goes, printed once at listen.
  const phases: string[] = [];
  let mark = 0; // performance.now() counts from process start
  const phase = (name: string) => {
    const now = performance.now();
    phases.push(`${name} ${((now - mark) / 1000).toFixed(1)} s`);
    mark = now;
  };
  phase('modules');
  let release: (() => void) | undefined;
  let database: Database;
  // A fresh PGlite folder will be seeded: hash the demo passwords (thread pool) while the database initialises.
  const earlyHashes =
    config.seedDemo && !config.databaseUrl && !existsSync(path.join(config.dataDir, 'PG_VERSION')) ? demoPasswordHashes() : undefined;
  earlyHashes?.catch(() => undefined);
  if (config.databaseUrl) {
    database = await openDatabase({ kind: 'postgres', url: config.databaseUrl });
  } else {
    release = lockDataDir(config.dataDir);
    database = await openDatabase({ kind: 'pglite', dataDir: config.dataDir });
  }

  phase('database');
  let demo = false;
  if (config.seedDemo && (await isEmpty(database))) {
    await seedDemo(database, earlyHashes);
    demo = true;
    console.log(`Seeded "${DEMO_LAB_NAME}". Demo sign-in (invented accounts, for trying Halfmark only):`);
    for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(8)} ${u.email}  password: ${u.password}`);
    phase('demo seed');
  }

  const log = (msg: string, err?: unknown) => console.error(`[halfmark] ${msg}`, err ?? '');
  const mail = await startMail({ database, smtpUrl: process.env.SMTP_URL || undefined, from: process.env.MAIL_FROM, production: config.production, log });
  if (mail.fakeSmtpPort) console.log(`E-mail is captured locally (no SMTP_URL): see ${config.publicUrl}/api/dev/mailbox`);
  const app = createApp({
    database,
    webDir: config.webDir,
    demo,
    log,
    mail: mail.outbox,
    auth: { jwtSecret: config.jwtSecret, publicUrl: config.publicUrl, production: config.production },
  });
  const server: Server = app.listen(config.port, config.host, () => {
    const where = config.databaseUrl ? 'PostgreSQL (DATABASE_URL)' : `PGlite in ${config.dataDir}`;
    phase('mail and app');
    console.log(`Start-up ${process.uptime().toFixed(1)} s since process start: ${phases.join(', ')}`);
    console.log(`Halfmark is serving on http://localhost:${(server.address() as { port: number }).port} (data: ${where})`);
  });

  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) {
      // A second Ctrl-C means now.
      console.error(`${signal} again: stopping without waiting.`);
      release?.();
      process.exit(1);
    }
    closing = true;
    console.log(`${signal}: closing Halfmark…`);
    // A close that hangs (a stuck connection, a data directory removed under us) must not keep the process alive.
    setTimeout(() => {
      console.error('Closing took longer than 15 s; stopping anyway.');
      release?.();
      process.exit(1);
    }, 15_000).unref();
    server.close();
    server.closeAllConnections?.();
    mail
      .stop()
      .catch((err) => console.error('stopping e-mail delivery failed', err))
      .then(() => database.close())
      .catch((err) => console.error('closing the database failed', err))
      .finally(() => {
        release?.();
        process.exit(0);
      });
  };
  process.on('SIGINT', () => shutdown('SIGINT'));
  process.on('SIGTERM', () => shutdown('SIGTERM'));
}

main().catch((err) => {
  if (err instanceof DataDirLockedError) {
    console.error(`Halfmark did not start: ${err.message}`);
  } else {
    console.error('Halfmark did not start:', err);
  }
  process.exit(1);
});
