import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PGlite } from '@electric-sql/pglite';
import { drizzle as drizzlePglite } from 'drizzle-orm/pglite';
import { migrate as migratePglite } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import pg from 'pg';
import * as schema from './schema';

export { schema };

/** The one database type the services see, whichever driver is underneath. */
export type Db = PgDatabase<PgQueryResultHKT, typeof schema>;

export type DatabaseKind = 'pglite' | 'postgres';

export interface Database {
  db: Db;
  kind: DatabaseKind;
  /** Raw SQL escape hatch for LISTEN/NOTIFY and maintenance; parameters as $1, $2... */
  query<T = Record<string, unknown>>(sql: string, params?: unknown[]): Promise<T[]>;
  close(): Promise<void>;
  /** PGlite only: the underlying instance (tests clone it). */
  pglite?: PGlite;
  /** PostgreSQL only: the connection pool. */
  pool?: pg.Pool;
}

export const migrationsFolder = path.join(path.dirname(fileURLToPath(import.meta.url)), 'migrations');

export type OpenOptions =
  | { kind: 'pglite'; dataDir?: string /* undefined: in memory */ }
  | { kind: 'postgres'; url: string; max?: number };

export async function openDatabase(opts: OpenOptions): Promise<Database> {
  if (opts.kind === 'postgres') {
    const pool = new pg.Pool({ connectionString: opts.url, max: opts.max ?? 10 });
    const db = drizzlePg(pool, { schema }) as unknown as Db;
    await migratePg(drizzlePg(pool), { migrationsFolder });
    return {
      db,
      kind: 'postgres',
      pool,
      query: async (text, params) => (await pool.query(text, params as unknown[])).rows,
      close: () => pool.end(),
    };
  }
  if (opts.dataDir) mkdirSync(opts.dataDir, { recursive: true });
  const client = opts.dataDir ? new PGlite(opts.dataDir) : new PGlite();
  await client.waitReady;
  await migratePglite(drizzlePglite(client), { migrationsFolder });
  return wrapPglite(client);
}

/** Wraps an already migrated PGlite instance (tests use this with clone()). */
export function wrapPglite(client: PGlite): Database {
  const db = drizzlePglite(client, { schema }) as unknown as Db;
  return {
    db,
    kind: 'pglite',
    pglite: client,
    query: async (text, params) => (await client.query(text, params as unknown[])).rows as never,
    close: () => client.close(),
  };
}
