import type pg from 'pg';
import type { Database } from '../../db/client';
import { LIVE_CHANNEL } from './sync';

/**
 * Fan-out of "run X changed up to seq N" from PostgreSQL NOTIFY to the server-sent-event streams of this process.
 * Pushes NOTIFY inside their transaction, so a notification arrives only after the change committed, on every server
 * instance listening to the same database. One LISTEN per database per process, opened with the first follower and
 * closed with the last: PGlite through `pglite.listen`, node-postgres through a dedicated client taken from the pool.
 */
type Listener = (seq: number) => void;

export class LiveHub {
  private readonly byRun = new Map<string, Set<Listener>>();
  private stop: Promise<(() => Promise<void>) | null> | null = null;

  constructor(
    private readonly database: Database,
    private readonly log: (msg: string, err?: unknown) => void = () => {},
  ) {}

  /** Calls `fn` for each notification about the run; the returned function unsubscribes. */
  async follow(runId: string, fn: Listener): Promise<() => void> {
    let set = this.byRun.get(runId);
    if (!set) this.byRun.set(runId, (set = new Set()));
    set.add(fn);
    this.stop ??= this.listen().catch((err) => {
      // Followers then see only what their own polling brings (the client falls back to polling).
      this.log('live follow: LISTEN failed; clients will poll', err);
      return null;
    });
    await this.stop;
    return () => {
      set!.delete(fn);
      if (!set!.size) this.byRun.delete(runId);
      if (!this.byRun.size && this.stop) {
        const s = this.stop;
        this.stop = null;
        void s.then((close) => close?.()).catch((err) => this.log('live follow: UNLISTEN failed', err));
      }
    };
  }

  get followers(): number {
    let n = 0;
    for (const s of this.byRun.values()) n += s.size;
    return n;
  }

  private dispatch = (payload: string | undefined) => {
    const [runId, seq] = (payload ?? '').split(':');
    const set = this.byRun.get(runId);
    if (!set) return;
    for (const fn of [...set]) {
      try {
        fn(Number(seq));
      } catch (err) {
        this.log('live follow: listener failed', err);
      }
    }
  };

  private async listen(): Promise<() => Promise<void>> {
    if (this.database.pglite) {
      const unlisten = await this.database.pglite.listen(LIVE_CHANNEL, this.dispatch);
      return unlisten;
    }
    const pool = this.database.pool as pg.Pool;
    const client = await pool.connect();
    const onNotification = (m: pg.Notification) => {
      if (m.channel === LIVE_CHANNEL) this.dispatch(m.payload);
    };
    client.on('notification', onNotification);
    await client.query(`LISTEN ${LIVE_CHANNEL}`);
    return async () => {
      client.off('notification', onNotification);
      try {
        await client.query(`UNLISTEN ${LIVE_CHANNEL}`);
      } finally {
        client.release();
      }
    };
  }
}

const hubs = new WeakMap<Database, LiveHub>();

export function liveHub(database: Database, log?: (msg: string, err?: unknown) => void): LiveHub {
  let hub = hubs.get(database);
  if (!hub) hubs.set(database, (hub = new LiveHub(database, log)));
  return hub;
}
