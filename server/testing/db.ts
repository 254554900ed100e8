import { randomBytes } from 'node:crypto';
import type { PGlite } from '@electric-sql/pglite';
import pg from 'pg';
import { openDatabase, wrapPglite, type Database } from '../../db/client';

/**
 * A fresh, migrated database for one test (or one test file).
 * - Default: PGlite in memory. Migrating costs ~2 s, so one template is migrated per test file and cloned (~0.6 s).
 * - With TEST_DATABASE_URL (CI's server-parity run): a new database on that PostgreSQL server, dropped on close.
 */
let template: Promise<Database> | undefined;

export async function testDatabase(): Promise<Database> {
  const url = process.env.TEST_DATABASE_URL;
  if (url) return freshPostgres(url);
  template ??= openDatabase({ kind: 'pglite' });
  const base = await template;
  const clone = (await (base.pglite as PGlite).clone()) as PGlite;
  return wrapPglite(clone);
}

async function freshPostgres(adminUrl: string): Promise<Database> {
  const name = `halfmark_t_${randomBytes(6).toString('hex')}`;
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  const u = new URL(adminUrl);
  u.pathname = `/${name}`;
  const database = await openDatabase({ kind: 'postgres', url: u.toString(), max: 5 });
  const close = database.close;
  database.close = async () => {
    await close();
    const again = new pg.Client({ connectionString: adminUrl });
    await again.connect();
    // pool.end() answers before its connections have gone: wait for them (up to 5 s), so the forced drop does not
    // kill a connection still closing, whose error would then surface in the test run.
    for (let i = 0; i < 100; i++) {
      const [{ n }] = (await again.query('select count(*)::int as n from pg_stat_activity where datname = $1', [name])).rows;
      if (!n) break;
      await new Promise((r) => setTimeout(r, 50));
    }
    await again.query(`drop database if exists ${name} with (force)`);
    await again.end();
  };
  return database;
}

/** Closes the per-file template; call from afterAll so the worker can exit. */
export async function closeTemplate(): Promise<void> {
  if (template) await (await template).close();
  template = undefined;
}
