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
  /**
   * LISTEN on a channel of fixed name: `onMessage` gets each payload, after the sending transaction committed.
   * `onLost` is called if the listening connection drops (notifications may then have been missed; listen again).
   * PostgreSQL: one dedicated connection per database, outside the pool, ended by `close()`.
   */
  listen(channel: string, onMessage: (payload: string) => void, onLost?: () => void): Promise<() => Promise<void>>;
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
    const listener = new PgListener(opts.url);
    return {
      db,
      kind: 'postgres',
      pool,
      query: async (text, params) => (await pool.query(text, params as unknown[])).rows,
      listen: (channel, onMessage, onLost) => listener.listen(channel, onMessage, onLost),
      close: async () => {
        await listener.close();
        await pool.end();
      },
    };
  }
  if (opts.dataDir) mkdirSync(opts.dataDir, { recursive: true });
  const client = opts.dataDir ? new PGlite(opts.dataDir) : new PGlite();
  await client.waitReady;
  // In memory, a new 16 MB WAL segment written full of zeros (the default, so disk space is taken up front) only grows
  // an in-memory file step by step, each step a copy of the whole file: ~0.4 s in one sync bench round's CPU profile,
  // landing on whichever write crosses into the segment. One session is the whole database, so SET covers it all.
  if (!opts.dataDir) await client.exec('set wal_init_zero = off');
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
    // One instance, no connection to lose: notifications arrive with the result of the committing statement.
    listen: async (channel, onMessage) => {
      const unlisten = await client.listen(channel, (payload) => onMessage(payload ?? ''));
      return () => unlisten();
    },
    close: () => client.close(),
  };
}

const CHANNEL = /^[a-z_][a-z0-9_]*$/;

/** LISTEN for every channel of one PostgreSQL database on one connection of its own (never a pooled one). */
class PgListener {
  private client: Promise<pg.Client> | null = null;
  private readonly subs = new Map<string, Set<{ onMessage: (payload: string) => void; onLost?: () => void }>>();
  private closed = false;

  constructor(private readonly url: string) {}

  async listen(channel: string, onMessage: (payload: string) => void, onLost?: () => void): Promise<() => Promise<void>> {
    if (!CHANNEL.test(channel)) throw new Error(`Not a channel name: ${channel}`);
    if (this.closed) throw new Error('The database is closed.');
    const sub = { onMessage, onLost };
    const client = await this.connect();
    let set = this.subs.get(channel);
    if (!set) {
      this.subs.set(channel, (set = new Set()));
      try {
        await client.query(`LISTEN ${channel}`);
      } catch (err) {
        this.subs.delete(channel);
        throw err;
      }
    }
    set.add(sub);
    return async () => {
      set.delete(sub);
      if (set.size || this.subs.get(channel) !== set) return;
      this.subs.delete(channel);
      const c = await this.client?.catch(() => null);
      if (c && !this.closed) await c.query(`UNLISTEN ${channel}`).catch(() => undefined);
    };
  }

  private connect(): Promise<pg.Client> {
    if (this.client) return this.client;
    const client = new pg.Client({ connectionString: this.url });
    const lost = () => {
      if (this.client !== attempt) return;
      this.client = null;
      // Every subscription ends with the connection; subscribers listen again when they want to.
      const all = [...this.subs.values()].flatMap((s) => [...s]);
      this.subs.clear();
      client.removeAllListeners('notification');
      void client.end().catch(() => undefined);
      for (const s of all) s.onLost?.();
    };
    client.on('notification', (m) => {
      for (const s of this.subs.get(m.channel) ?? []) s.onMessage(m.payload ?? '');
    });
    client.on('error', lost);
    client.on('end', lost);
    const attempt: Promise<pg.Client> = client.connect().then(
      () => client,
      (err) => {
        if (this.client === attempt) this.client = null;
        throw err;
      },
    );
    this.client = attempt;
    return attempt;
  }

  async close(): Promise<void> {
    this.closed = true;
    const c = this.client;
    this.client = null;
    this.subs.clear();
    const client = await c?.catch(() => null);
    if (client) await client.end().catch(() => undefined);
  }
}
