import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Database } from '../../db/client';
import { serverSettings } from '../../db/schema';

const KEY = 'jwt_secret';

/**
 * The access-token signing key: JWT_SECRET when set (at least 32 characters), else a random secret generated once and
 * kept in the database, so restarting the server keeps everyone signed in.
 */
export async function loadSigningKey(database: Database, configured?: string): Promise<Uint8Array> {
  if (configured) {
    if (configured.length < 32) throw new Error('JWT_SECRET must be at least 32 characters.');
    return new TextEncoder().encode(configured);
  }
  await database.db
    .insert(serverSettings)
    .values({ key: KEY, value: randomBytes(32).toString('base64url') })
    .onConflictDoNothing();
  const [row] = await database.db.select().from(serverSettings).where(eq(serverSettings.key, KEY));
  return Buffer.from(row.value, 'base64url');
}
