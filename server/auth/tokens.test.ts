import { SignJWT, UnsecuredJWT } from 'jose';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTemplate } from '../testing/db';
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
