import type { Database } from '../../db/client';

/**
 * Answers read from the database, kept per scope (a lab, a user) until the database announces a change in that scope.
 * Two are in use (server/auth/context.ts): the desk lists of each lab, and the session and memberships each request's
 * access check reads.
 *
 * Invalidation, so that no answer older than the last change this instance was told of is ever served:
 * - Database triggers (migration 0007) NOTIFY the cache's channel with the scope (or '*', every scope) in the same
 *   transaction as the change. NOTIFY is delivered after the commit to every server instance listening on the same
 *   database (PGlite: this process, with the result of the committing statement).
 * - A write request of this instance invalidates too when its handler returns (server/http/routes.ts): the
 *   notification of its own commit may reach the listening connection a moment later, and the next request of the
 *   same client must already see the change.
 * - Each scope has a generation, bumped by every invalidation. A fill remembers the generation it started under and
 *   is stored only if it is still current when the fill ends: a fill that raced an invalidation is answered once,
 *   never kept. Concurrent requests for the same answer share one fill, within one generation only.
 * - Nothing is cached while the instance is not listening (before LISTEN answered, after the connection dropped):
 *   a dropped connection may have lost notifications, so it also empties the cache.
 */
export const DESK_CHANNEL = 'halfmark_desk';
export const AUTH_CHANNEL = 'halfmark_auth';

interface Entry {
  value: unknown;
  at: number;
}

export interface NotifiedCacheOptions {
  /** Answers kept at most, over all scopes (least recently used go first). */
  maxEntries?: number;
  /** Age after which an answer is read again even without a notification (a safety margin, not the mechanism). */
  maxAgeMs?: number;
  /** Wait before listening again after LISTEN failed or its connection dropped. */
  retryMs?: number;
  log?: (msg: string, err?: unknown) => void;
  now?: () => number;
}

export class NotifiedCache {
  private readonly entries = new Map<string, Entry>();
  private readonly generations = new Map<string, number>();
  /** Bumped when every scope is invalidated at once. */
  private epoch = 0;
  private readonly inflight = new Map<string, Promise<unknown>>();
  private state: 'idle' | 'starting' | 'listening' = 'idle';
  private retryAt = 0;
  private readonly o: Required<NotifiedCacheOptions>;

  constructor(
    private readonly database: Database,
    readonly channel: string,
    opts: NotifiedCacheOptions = {},
  ) {
    this.o = { maxEntries: 500, maxAgeMs: 60_000, retryMs: 2_000, log: () => {}, now: () => performance.now(), ...opts };
  }

  /** True once notifications are being received, so answers may be kept. */
  get active(): boolean {
    return this.state === 'listening';
  }

  get size(): number {
    return this.entries.size;
  }

  /** The scope's answer under `key`, from the cache or from `fill` (kept only if no invalidation came meanwhile). */
  async get<T>(scope: string, key: string, fill: () => Promise<T>): Promise<T> {
    if (this.state !== 'listening') {
      this.start();
      return fill();
    }
    const k = `${scope}\n${key}`;
    const hit = this.entries.get(k);
    if (hit && this.o.now() - hit.at <= this.o.maxAgeMs) {
      // Most recently used goes last in the map's order.
      this.entries.delete(k);
      this.entries.set(k, hit);
      return hit.value as T;
    }
    const epoch = this.epoch;
    const generation = this.generation(scope);
    const flight = `${epoch}:${generation}:${k}`;
    let p = this.inflight.get(flight) as Promise<T> | undefined;
    if (!p) {
      p = fill()
        .then((value) => {
          if (this.state === 'listening' && this.epoch === epoch && this.generation(scope) === generation) this.store(k, value);
          return value;
        })
        .finally(() => this.inflight.delete(flight));
      this.inflight.set(flight, p);
    }
    return p;
  }

  /** Something in the scope changed: drop its answers; fills under way are not kept. */
  invalidate(scope: string): void {
    this.generations.set(scope, this.generation(scope) + 1);
    const prefix = `${scope}\n`;
    for (const k of this.entries.keys()) if (k.startsWith(prefix)) this.entries.delete(k);
  }

  invalidateAll(): void {
    this.epoch++;
    this.entries.clear();
  }

  private generation(scope: string): number {
    return this.generations.get(scope) ?? 0;
  }

  private store(k: string, value: unknown) {
    this.entries.delete(k);
    this.entries.set(k, { value, at: this.o.now() });
    while (this.entries.size > this.o.maxEntries) this.entries.delete(this.entries.keys().next().value!);
  }

  private onMessage = (payload: string) => {
    if (payload === '*') this.invalidateAll();
    else this.invalidate(payload);
  };

  private onLost = () => {
    this.state = 'idle';
    this.retryAt = this.o.now() + this.o.retryMs;
    this.invalidateAll();
    this.o.log(`${this.channel}: the listening connection dropped; nothing is cached until it is back`);
  };

  private start() {
    if (this.state !== 'idle' || this.o.now() < this.retryAt) return;
    this.state = 'starting';
    this.database.listen(this.channel, this.onMessage, this.onLost).then(
      () => {
        if (this.state === 'starting') this.state = 'listening';
      },
      (err) => {
        this.state = 'idle';
        this.retryAt = this.o.now() + this.o.retryMs;
        this.o.log(`${this.channel}: LISTEN failed; nothing is cached`, err);
      },
    );
  }
}
