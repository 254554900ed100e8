import { eq, sql } from 'drizzle-orm';
import { SignJWT, UnsecuredJWT } from 'jose';
import { v7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { labs, memberships, sessions, users } from '../../db/schema';
import { serverContextOf } from '../app';
import { closeTemplate } from '../testing/db';
import { eventually, sleep } from '../testing/eventually';
import { authFixture, TEST_JWT_SECRET, type AuthFixture } from './test-fixture';
import { ACCESS_TOKEN } from './tokens';

// RFC 8725 (JWT Best Current Practices) §2.1, §3.1, §3.8–3.11: each of these must be refused.
let fx: AuthFixture;
let sid: string;
const key = new TextEncoder().encode(TEST_JWT_SECRET);

beforeAll(async () => {
  fx = await authFixture();
  sid = (await fx.session(fx.people.analyst.id)).sessionId;
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

function claims(over: Partial<{ iss: string; aud: string; typ: string; use: string; iat: number; nbf: number; exp: number }> = {}) {
  const t = Math.floor(fx.now().getTime() / 1000);
  return new SignJWT({ sid, token_use: over.use ?? 'access' })
    .setProtectedHeader({ alg: 'HS256', typ: over.typ ?? ACCESS_TOKEN.typ })
    .setIssuer(over.iss ?? ACCESS_TOKEN.issuer)
    .setAudience(over.aud ?? ACCESS_TOKEN.audience)
    .setSubject(fx.people.analyst.id)
    .setIssuedAt(over.iat ?? t)
    .setNotBefore(over.nbf ?? t)
    .setExpirationTime(over.exp ?? t + 600);
}

const me = (token: string) => fx.api().get('/api/auth/me').set('authorization', `Bearer ${token}`);

describe('access token verification', () => {
  it('accepts a well-formed token (control for the refusals below)', async () => {
    await me(await claims().sign(key)).expect(200);
  });

  const cases: [string, () => Promise<string>][] = [
    ['alg none', async () => new UnsecuredJWT({ sid, token_use: 'access' }).setIssuer(ACCESS_TOKEN.issuer).setAudience(ACCESS_TOKEN.audience).setSubject(fx.people.analyst.id).setIssuedAt().setExpirationTime('10m').encode()],
    ['alg none with a forged typ header', async () => {
      const good = await claims().sign(key);
      const [, payload] = good.split('.');
      const header = Buffer.from(JSON.stringify({ alg: 'none', typ: ACCESS_TOKEN.typ })).toString('base64url');
      return `${header}.${payload}.`;
    }],
    ['wrong algorithm (HS512 with the same secret)', async () => {
      const t = Math.floor(fx.now().getTime() / 1000);
      return new SignJWT({ sid, token_use: 'access' })
        .setProtectedHeader({ alg: 'HS512', typ: ACCESS_TOKEN.typ })
        .setIssuer(ACCESS_TOKEN.issuer).setAudience(ACCESS_TOKEN.audience).setSubject(fx.people.analyst.id)
        .setIssuedAt(t).setNotBefore(t).setExpirationTime(t + 600)
        .sign(key);
    }],
    ['bad signature (another secret)', () => claims().sign(new TextEncoder().encode('another-secret-of-sufficient-length-000000'))],
    ['tampered payload (every claim valid, only the subject changed)', async () => {
      const [h, p0, s] = (await claims().sign(key)).split('.');
      const payload = { ...JSON.parse(Buffer.from(p0, 'base64url').toString()), sub: fx.people.manager.id };
      return `${h}.${Buffer.from(JSON.stringify(payload)).toString('base64url')}.${s}`;
    }],
    ['wrong issuer', () => claims({ iss: 'someone-else' }).sign(key)],
    ['wrong audience', () => claims({ aud: 'another-api' }).sign(key)],
    ['wrong header type', () => claims({ typ: 'JWT' }).sign(key)],
    ['wrong token use', () => claims({ use: 'refresh' }).sign(key)],
    ['expired', () => {
      const t = Math.floor(fx.now().getTime() / 1000);
      return claims({ iat: t - 1200, nbf: t - 1200, exp: t - 600 }).sign(key);
    }],
    ['not yet valid', () => {
      const t = Math.floor(fx.now().getTime() / 1000);
      return claims({ iat: t, nbf: t + 600, exp: t + 1200 }).sign(key);
    }],
    ['garbage', async () => 'not.a.jwt'],
  ];
  for (const [name, make] of cases) {
    it(`refuses: ${name}`, async () => {
      const res = await me(await make());
      expect(res.status).toBe(401);
      expect(res.body.error.code).toBe('invalid_token');
    });
  }

  it('refuses a token once its 10-minute life has passed on the server clock', async () => {
    const token = await claims().sign(key);
    await me(token).expect(200);
    fx.advance(ACCESS_TOKEN.ttlSeconds * 1000 + 10_000);
    await me(token).expect(401);
  });
});

describe('refresh tokens', () => {
  it('rotate on use; reusing an old one revokes the whole family', async () => {
    const s = await fx.session(fx.people.viewer.id);
    const first = await fx.api().post('/api/auth/refresh').set('cookie', s.refreshCookie).expect(200);
    const setCookie = String(first.headers['set-cookie']);
    expect(setCookie).toMatch(/hm_refresh=[^;]+; Path=\/api\/auth; Expires=[^;]+; HttpOnly; SameSite=Strict/);
    const next = /hm_refresh=([^;]+)/.exec(setCookie)![1];
    expect(`hm_refresh=${next}`).not.toBe(s.refreshCookie);
    await me(first.body.accessToken).expect(200);

    // The first token again: someone holds a copy. Both it and the newer one stop working.
    const reuse = await fx.api().post('/api/auth/refresh').set('cookie', s.refreshCookie).expect(401);
    expect(reuse.body.error.code).toBe('refresh_reused');
    await fx.api().post('/api/auth/refresh').set('cookie', `hm_refresh=${next}`).expect(401);
    // …and so does the access token of that session, at once.
    await me(first.body.accessToken).expect(401);
  });

  it('refuses a missing or unknown refresh cookie', async () => {
    await fx.api().post('/api/auth/refresh').expect(401);
    await fx.api().post('/api/auth/refresh').set('cookie', 'hm_refresh=unknown-token-value').expect(401);
  });

  it('sign-out ends the session: refresh and access token both stop working', async () => {
    const s = await fx.session(fx.people.analyst.id);
    await me(s.accessToken).expect(200);
    await fx.api().post('/api/auth/logout').set('cookie', s.refreshCookie).expect(204);
    await fx.api().post('/api/auth/refresh').set('cookie', s.refreshCookie).expect(401);
    await me(s.accessToken).expect(401);
  });
});

describe('the access check is cached per session; a change ends access at the next request', () => {
  const cache = () => serverContextOf(fx.app).sessionCache;
  const bearer = (token: string) => `Bearer ${token}`;

  /** A session whose access check is cached (the instance listens once any request was checked). */
  async function cachedSession(userId: string) {
    const s = await fx.session(userId);
    for (let i = 0; i < 200 && !cache().active; i++) {
      await me(s.accessToken).expect(200);
      await sleep(10);
    }
    expect(cache().active).toBe(true);
    // Notifications of earlier direct writes reach a PostgreSQL listener a moment after their commit.
    if (fx.database.kind === 'postgres') await sleep(200);
    await me(s.accessToken).expect(200);
    await me(s.accessToken).expect(200);
    return s;
  }


  it('answers from the cache: a session ended without a notification still passes until it is announced', async () => {
    const s = await cachedSession(fx.people.viewer.id);
    await fx.database.db.transaction(async (tx) => {
      await tx.execute(sql`alter table sessions disable trigger sessions_auth_update`);
      await tx.update(sessions).set({ revokedAt: fx.now(), revokedReason: 'test' }).where(eq(sessions.id, s.sessionId));
      await tx.execute(sql`alter table sessions enable trigger sessions_auth_update`);
    });
    await me(s.accessToken).expect(200);
    await fx.database.query(`select pg_notify('halfmark_auth', $1)`, [fx.people.viewer.id]);
    await eventually(() => me(s.accessToken).expect(401));
  });

  it('a sync push keeps the cached access checks; another write drops them', async () => {
    const s = await cachedSession(fx.people.analyst.id);
    expect(cache().size).toBeGreaterThan(0);
    const push = (changes: unknown[]) => fx.api().post('/api/sync/push').set('authorization', bearer(s.accessToken)).send({ deviceId: v7(), sentAt: Date.now(), changes });
    const run = { id: v7(), kind: 'run', seq: 1, recordedAt: Date.now(), payload: { labId: fx.labA.id, sampleName: 'cache demo run' } };
    expect((await push([run]).expect(200)).body.results[0].outcome).toBe('accepted');
    expect(cache().size).toBeGreaterThan(0);
    await fx.api().post('/api/auth/logout').set('cookie', s.refreshCookie).expect(204);
    expect(cache().size).toBe(0);
  });

  it('sign-out through this instance ends access on the very next request', async () => {
    const s = await cachedSession(fx.people.analyst.id);
    await fx.api().post('/api/auth/logout').set('cookie', s.refreshCookie).expect(204);
    await me(s.accessToken).expect(401);
  });

  it('a session ended or an account disabled elsewhere (another instance, a script) is refused once announced', async () => {
    const s = await cachedSession(fx.people.analyst.id);
    await fx.database.db.update(sessions).set({ revokedAt: fx.now(), revokedReason: 'test' }).where(eq(sessions.id, s.sessionId));
    await eventually(() => me(s.accessToken).expect(401));

    const target = await fx.person(fx.labA.id, 'analyst');
    const t = await cachedSession(target.id);
    await fx.database.db.update(users).set({ disabledAt: fx.now() }).where(eq(users.id, target.id));
    await eventually(() => me(t.accessToken).expect(401));
  });

  it('memberships and lab names changed elsewhere apply once announced', async () => {
    const target = await fx.person(fx.labA.id, 'viewer');
    const s = await cachedSession(target.id);
    const runs = () => fx.api().get(`/api/labs/${fx.labA.id}/runs`).set('authorization', bearer(s.accessToken));
    await runs().expect(200);
    await fx.database.db.update(labs).set({ name: 'Lab A renamed (test)' }).where(eq(labs.id, fx.labA.id));
    await eventually(async () => expect((await me(s.accessToken).expect(200)).body.labs[0].labName).toBe('Lab A renamed (test)'));
    await fx.database.db.update(labs).set({ name: 'Lab A (test)' }).where(eq(labs.id, fx.labA.id));
    await fx.database.db.delete(memberships).where(eq(memberships.userId, target.id));
    await eventually(() => runs().expect(404));
  });
});
