import type { Database } from '../../db/client';
import { AUTH_CHANNEL, DESK_CHANNEL, NotifiedCache } from '../services/notified-cache';
import { RateLimiter } from './rate-limit';
import { loadSigningKey } from './secret';
import { TokenSigner } from './tokens';

export interface AuthOptions {
  /** Token-signing secret (JWT_SECRET); absent: generated once and kept in the database. */
  jwtSecret?: string;
  /** Base of the links in e-mails (PUBLIC_URL). */
  publicUrl?: string;
  production?: boolean;
  /** Send the refresh cookie with the Secure flag (default: in production). */
  secureCookies?: boolean;
  /** Clock, replaceable in tests (expiry, lockouts). */
  now?: () => Date;
}

/** What route handlers and services share: the database, the clock, token signing, limits and the outbox nudge. */
export interface ServerContext {
  database: Database;
  log: (msg: string, err?: unknown) => void;
  now: () => Date;
  publicUrl: string;
  production: boolean;
  /** The database holds the seeded demo lab. */
  demo: boolean;
  secureCookies: boolean;
  signer(): Promise<TokenSigner>;
  limiter: RateLimiter;
  /** Called after a transaction that wrote e-mail to the outbox commits. */
  mailNudge(): void;
  /** Desk list answers per lab, dropped when the lab's runs change (server/services/notified-cache.ts). */
  labCache: NotifiedCache;
  /** Session, account and memberships per user for the access check, dropped when any of them changes. */
  sessionCache: NotifiedCache;
}

export function createServerContext(deps: {
  database: Database;
  log: (msg: string, err?: unknown) => void;
  auth?: AuthOptions;
  mail?: { nudge(): void };
  demo?: boolean;
}): ServerContext {
  const o = deps.auth ?? {};
  const now = o.now ?? (() => new Date());
  const production = o.production ?? process.env.NODE_ENV === 'production';
  let signer: Promise<TokenSigner> | undefined;
  return {
    database: deps.database,
    log: deps.log,
    now,
    publicUrl: (o.publicUrl ?? process.env.PUBLIC_URL ?? 'http://localhost:8090').replace(/\/+$/, ''),
    production,
    demo: Boolean(deps.demo),
    secureCookies: o.secureCookies ?? production,
    signer() {
      signer ??= loadSigningKey(deps.database, o.jwtSecret ?? process.env.JWT_SECRET).then((k) => new TokenSigner(k, now));
      signer.catch(() => (signer = undefined));
      return signer;
    },
    limiter: new RateLimiter(deps.database, now),
    mailNudge: () => deps.mail?.nudge(),
    labCache: new NotifiedCache(deps.database, DESK_CHANNEL, { log: deps.log }),
    sessionCache: new NotifiedCache(deps.database, AUTH_CHANNEL, { log: deps.log, maxEntries: 2000 }),
  };
}
