import { SMTPServer } from 'smtp-server';
import type { Database } from '../../db/client';
import * as outboxRepo from '../repos/outbox';
import { parseMessage } from './mime';

const MAX_BYTES = 2 * 1024 * 1024;

/**
 * A local SMTP server that accepts anything from this machine and stores it in captured_mail, so development and
 * tests exercise real SMTP delivery without sending mail anywhere. Listens on 127.0.0.1 only.
 */
export async function startFakeSmtp(opts: { database: Database; port?: number; log: (m: string, e?: unknown) => void }) {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    banner: 'Halfmark development mail catcher',
    size: MAX_BYTES,
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        const raw = Buffer.concat(chunks).toString('utf8');
        const { subject, text } = parseMessage(raw);
        const from = session.envelope.mailFrom ? session.envelope.mailFrom.address : null;
        outboxRepo
          .insertCaptured(opts.database.db, {
            fromAddress: from,
            toAddresses: session.envelope.rcptTo.map((r) => r.address),
            subject,
            textBody: text,
            raw,
          })
          .then(() => callback(), (err) => {
            opts.log('fake SMTP could not store a message', err);
            callback(err as Error);
          });
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, '127.0.0.1', () => resolve());
  });
  server.on('error', (err) => opts.log('fake SMTP error', err));
  const port = (server.server.address() as { port: number }).port;
  return {
    port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
