import { describe, expect, it } from 'vitest';
import type { Database } from '../../db/client';
import { DESK_CHANNEL, NotifiedCache, type NotifiedCacheOptions } from './notified-cache';

/** A database that only listens: the test sends the notifications and drops the connection. */
function fakeDatabase() {
  let onMessage: ((payload: string) => void) | null = null;
  let onLost: (() => void) | null = null;
  let listens = 0;
  let fail = false;
  const database = {
    listen: async (channel: string, m: (payload: string) => void, l?: () => void) => {
      expect(channel).toBe(DESK_CHANNEL);
      listens++;
      if (fail) throw new Error('LISTEN refused');
      onMessage = m;
      onLost = l ?? null;
      return async () => {};
    },
  } as unknown as Database;
  return {
    database,
    notify: (payload: string) => onMessage!(payload),
    lose: () => onLost!(),
    get listens() {
      return listens;
    },
    set fail(v: boolean) {
      fail = v;
    },
  };
}

function deferred<T>() {
  let resolve!: (v: T) => void;
  const promise = new Promise<T>((r) => (resolve = r));
  return { promise, resolve };
}

const tick = () => new Promise((r) => setTimeout(r, 0));

/** A counting fill that answers `value()` at the time it runs. */
function counter(value: () => string) {
  const f = async () => {
    f.calls++;
    return value();
  };
  f.calls = 0;
  return f;
}

async function listening(opts: NotifiedCacheOptions = {}) {
  const db = fakeDatabase();
  const cache = new NotifiedCache(db.database, DESK_CHANNEL, opts);
  await cache.get('lab-a', 'warm-up', async () => 'x');
  await tick();
  expect(cache.active).toBe(true);
  return { db, cache };
}

describe('NotifiedCache (the desk lists of each lab, the access check of each session)', () => {
  it('keeps nothing until LISTEN has answered, then answers from the cache', async () => {
    const db = fakeDatabase();
    const cache = new NotifiedCache(db.database, DESK_CHANNEL);
    const fill = counter(() => 'page');
    expect(cache.active).toBe(false);
    expect(await cache.get('lab-a', 'k', fill)).toBe('page');
    await tick();
    expect(cache.active).toBe(true);
    await cache.get('lab-a', 'k', fill);
    await cache.get('lab-a', 'k', fill);
    // Once before listening (not kept), once to fill, then from the cache.
    expect(fill.calls).toBe(2);
    expect(db.listens).toBe(1);
  });

  it('a notification for a scope drops that scope’s answers only; "*" drops every scope’s', async () => {
    const { db, cache } = await listening();
    let version = 1;
    const a = counter(() => `a${version}`);
    const b = counter(() => `b${version}`);
    expect(await cache.get('lab-a', 'k', a)).toBe('a1');
    expect(await cache.get('lab-b', 'k', b)).toBe('b1');
    version = 2;
    expect(await cache.get('lab-a', 'k', a)).toBe('a1');
    db.notify('lab-a');
    expect(await cache.get('lab-a', 'k', a)).toBe('a2');
    expect(await cache.get('lab-b', 'k', b)).toBe('b1');
    version = 3;
    db.notify('*');
    expect(await cache.get('lab-a', 'k', a)).toBe('a3');
    expect(await cache.get('lab-b', 'k', b)).toBe('b3');
  });

  it('a fill that raced an invalidation is answered once but never kept', async () => {
    const { db, cache } = await listening();
    const slow = deferred<string>();
    const first = cache.get('lab-a', 'k', () => slow.promise);
    // The change commits and is announced while the (older) fill is still reading.
    db.notify('lab-a');
    // A request after the notification does not join the older fill.
    const fresh = counter(() => 'new');
    const second = cache.get('lab-a', 'k', fresh);
    slow.resolve('old');
    expect(await first).toBe('old');
    expect(await second).toBe('new');
    expect(fresh.calls).toBe(1);
    // What is kept is the fill that started after the notification.
    expect(await cache.get('lab-a', 'k', counter(() => 'never'))).toBe('new');
  });

  it('a fill that raced a local invalidation is not kept either', async () => {
    const { cache } = await listening();
    const slow = deferred<string>();
    const first = cache.get('lab-a', 'k', () => slow.promise);
    cache.invalidate('lab-a');
    slow.resolve('old');
    expect(await first).toBe('old');
    const after = counter(() => 'new');
    expect(await cache.get('lab-a', 'k', after)).toBe('new');
    expect(after.calls).toBe(1);
  });

  it('concurrent requests for one answer share one fill', async () => {
    const { cache } = await listening();
    const slow = deferred<string>();
    let calls = 0;
    const fill = () => {
      calls++;
      return slow.promise;
    };
    const all = Promise.all([cache.get('lab-a', 'k', fill), cache.get('lab-a', 'k', fill), cache.get('lab-a', 'k', fill)]);
    slow.resolve('page');
    expect(await all).toEqual(['page', 'page', 'page']);
    expect(calls).toBe(1);
  });

  it('a failed fill is not kept and the next request fills again', async () => {
    const { cache } = await listening();
    await expect(cache.get('lab-a', 'k', async () => Promise.reject(new Error('database gone')))).rejects.toThrow('database gone');
    expect(await cache.get('lab-a', 'k', async () => 'page')).toBe('page');
  });

  it('when the listening connection drops: empties, keeps nothing, listens again after the wait', async () => {
    let now = 0;
    const { db, cache } = await listening({ now: () => now, retryMs: 1000 });
    await cache.get('lab-a', 'k', async () => 'old');
    db.lose();
    expect(cache.active).toBe(false);
    expect(cache.size).toBe(0);
    const fill = counter(() => 'new');
    expect(await cache.get('lab-a', 'k', fill)).toBe('new');
    expect(await cache.get('lab-a', 'k', fill)).toBe('new');
    expect(fill.calls).toBe(2);
    expect(db.listens).toBe(1);
    now = 1001;
    await cache.get('lab-a', 'k', fill);
    await tick();
    expect(db.listens).toBe(2);
    expect(cache.active).toBe(true);
  });

  it('when LISTEN fails: answers every request from the database and tries again later', async () => {
    let now = 0;
    const db = fakeDatabase();
    db.fail = true;
    const cache = new NotifiedCache(db.database, DESK_CHANNEL, { now: () => now, retryMs: 500 });
    const fill = counter(() => 'page');
    await cache.get('lab-a', 'k', fill);
    await tick();
    await cache.get('lab-a', 'k', fill);
    expect(fill.calls).toBe(2);
    expect(db.listens).toBe(1);
    db.fail = false;
    now = 501;
    await cache.get('lab-a', 'k', fill);
    await tick();
    expect(cache.active).toBe(true);
  });

  it('holds at most maxEntries answers (least recently used go first) and none older than maxAgeMs', async () => {
    let now = 0;
    const { cache } = await listening({ maxEntries: 2, maxAgeMs: 100, now: () => now });
    const fills = { a: counter(() => 'a'), b: counter(() => 'b'), c: counter(() => 'c') };
    await cache.get('lab', 'a', fills.a);
    await cache.get('lab', 'b', fills.b);
    await cache.get('lab', 'a', fills.a); // a is now the most recently used
    await cache.get('lab', 'c', fills.c); // b goes
    await cache.get('lab', 'a', fills.a);
    await cache.get('lab', 'b', fills.b);
    expect([fills.a.calls, fills.b.calls, fills.c.calls]).toEqual([1, 2, 1]);
    now = 101;
    await cache.get('lab', 'b', fills.b);
    expect(fills.b.calls).toBe(3);
  });
});
