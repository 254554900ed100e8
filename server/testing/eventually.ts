export const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));

/**
 * Retries `check` until it passes or `ms` have gone by (then its last failure is thrown). For what a PostgreSQL server
 * delivers a moment after a commit (NOTIFY to a listening connection); PGlite delivers it with the commit itself.
 */
export async function eventually<T>(check: () => Promise<T>, ms = 5000): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    try {
      return await check();
    } catch (err) {
      if (Date.now() > end) throw err;
      await sleep(25);
    }
  }
}
