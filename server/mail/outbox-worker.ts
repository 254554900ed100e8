import type { Transporter } from 'nodemailer';
import type { Database } from '../../db/client';
import * as outboxRepo from '../repos/outbox';

export const OUTBOX = {
  pollMs: 5_000,
  leaseSeconds: 300,
  batch: 20,
  maxAttempts: 10,
  /** Retry after 15 s, 30 s, 1 min … up to an hour. */
  retrySeconds: (attempts: number) => Math.min(3600, 15 * 2 ** (attempts - 1)),
};

export interface OutboxWorker {
  /** Ask for a delivery round soon (after a transaction that wrote to the outbox has committed). */
  nudge(): void;
  /** Deliver everything due now; resolves with the number sent. Tests call this directly. */
  drain(): Promise<number>;
  stop(): Promise<void>;
}

export function startOutboxWorker(opts: {
  database: Database;
  transport: Transporter;
  from: string;
  log: (m: string, e?: unknown) => void;
  now?: () => Date;
  autoStart?: boolean;
}): OutboxWorker {
  const now = opts.now ?? (() => new Date());
  let timer: NodeJS.Timeout | undefined;
  let running: Promise<number> | undefined;
  let stopped = false;

  async function round(): Promise<number> {
    let sent = 0;
    for (;;) {
      const t = now();
      const rows = await outboxRepo.claimDue(opts.database.db, t, new Date(t.getTime() + OUTBOX.leaseSeconds * 1000), OUTBOX.batch);
      if (rows.length === 0) return sent;
      for (const row of rows) {
        try {
          await opts.transport.sendMail({
            from: opts.from,
            to: row.toAddress,
            subject: row.subject,
            text: row.textBody,
            ...(row.htmlBody ? { html: row.htmlBody } : {}),
          });
          await outboxRepo.markSent(opts.database.db, row.id, now());
          sent++;
        } catch (err) {
          const giveUp = row.attempts >= OUTBOX.maxAttempts;
          const retryAt = giveUp ? null : new Date(now().getTime() + OUTBOX.retrySeconds(row.attempts) * 1000);
          opts.log(`e-mail to ${row.toAddress} not sent (attempt ${row.attempts}${giveUp ? ', giving up' : ''})`, err);
          await outboxRepo.markFailed(opts.database.db, row.id, String((err as Error)?.message ?? err), retryAt);
        }
      }
    }
  }

  function drain(): Promise<number> {
    // One round at a time; a nudge during a round is served by the round itself picking up new rows.
    running ??= round().finally(() => (running = undefined));
    return running;
  }

  function schedule(ms: number) {
    if (stopped) return;
    clearTimeout(timer);
    timer = setTimeout(() => {
      drain()
        .catch((err) => opts.log('outbox round failed', err))
        .finally(() => schedule(OUTBOX.pollMs));
    }, ms);
    timer.unref?.();
  }

  if (opts.autoStart !== false) schedule(0);
  return {
    nudge: () => {
      if (opts.autoStart !== false) schedule(0);
    },
    drain,
    async stop() {
      stopped = true;
      clearTimeout(timer);
      await running?.catch(() => {});
    },
  };
}
