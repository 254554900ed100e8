import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Database } from '../../db/client';
import { serverSettings, users } from '../../db/schema';
import { createApp } from '../app';
import { closeTemplate, testDatabase } from '../testing/db';
import { hashPassword, SCRYPT_PARAMS } from './password';

let database: Database;
beforeAll(async () => {
  database = await testDatabase();
}, 120_000);
afterAll(async () => {
  await database.close();
  await closeTemplate();
});

describe('signing key without JWT_SECRET', () => {
  // Found by hand: on PGlite (one connection) the first sign-in of a server without JWT_SECRET waited forever,
  // because the key was first read from the database inside the sign-in transaction.
  it('the first sign-in creates the key in the database and answers; later tokens verify with the stored key', async () => {
    const password = 'a long enough test password';
    await database.db.insert(users).values({
      email: 'first@example.org',
      displayName: 'First',
      passwordHash: await hashPassword(password, { ...SCRYPT_PARAMS, N: 2 ** 10 }),
    });
    const app = createApp({ database, log: () => {}, auth: { publicUrl: 'http://halfmark.test' } });
    const login = await request(app).post('/api/auth/login').send({ email: 'first@example.org', password }).expect(200);
    const stored = await database.db.select().from(serverSettings);
    expect(stored.map((r) => r.key)).toContain('jwt_secret');
    // A second app on the same database (a restarted server) accepts the token: the key was kept.
    const again = createApp({ database, log: () => {}, auth: { publicUrl: 'http://halfmark.test' } });
    const me = await request(again).get('/api/auth/me').set('authorization', `Bearer ${login.body.accessToken}`).expect(200);
    expect(me.body.user.email).toBe('first@example.org');
  }, 60_000);
});
