import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTemplate } from '../testing/db';
import { POLICIES, lockSeconds } from './rate-limit';
import { authFixture, TEST_PASSWORD, type AuthFixture } from './test-fixture';

// Policy values are common practice (no single standard); OWASP Authentication Cheat Sheet recommends throttling
// per account with exponentially growing, bounded delays rather than permanent lockout.
describe('lockSeconds', () => {
  it('passes the free failures, then doubles, and never exceeds the cap', () => {
    const p = POLICIES.loginAccount;
    expect(lockSeconds(p.free - 1, p)).toBe(0);
    expect(lockSeconds(p.free, p)).toBe(p.baseSeconds);
    expect(lockSeconds(p.free + 1, p)).toBe(p.baseSeconds * 2);
    expect(lockSeconds(p.free + 2, p)).toBe(p.baseSeconds * 4);
    expect(lockSeconds(p.free + 50, p)).toBe(p.capSeconds);
    // An attacker hammering one account can keep the owner out for at most a minute at a time.
    expect(POLICIES.loginAccount.capSeconds).toBeLessThanOrEqual(60);
  });
});

let fx: AuthFixture;
beforeAll(async () => {
  fx = await authFixture();
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

const login = (email: string, password: string, ip = '10.0.0.1') =>
  fx.api().post('/api/auth/login').set('x-forwarded-for', ip).send({ email, password });

describe('sign-in rate limiting (through the API)', () => {
  it('locks an account after repeated failures with 429 + Retry-After, even for the right password', async () => {
    const { email } = await fx.person(fx.labA.id, 'analyst');
    const free = POLICIES.loginAccount.free;
    for (let i = 0; i < free; i++) expect((await login(email, 'wrong password ' + i)).status).toBe(401);
    const locked = await login(email, TEST_PASSWORD);
    expect(locked.status).toBe(429);
    expect(locked.body.error.code).toBe('too_many_attempts');
    expect(Number(locked.headers['retry-after'])).toBe(POLICIES.loginAccount.baseSeconds);

    // After the lockout passes, the right password works and clears the count.
    fx.advance(POLICIES.loginAccount.baseSeconds * 1000 + 1);
    expect((await login(email, TEST_PASSWORD)).status).toBe(200);
    for (let i = 0; i < free - 1; i++) expect((await login(email, 'wrong again ' + i)).status).toBe(401);
  });

  it('a success resets the counter: failures either side of it do not add up', async () => {
    const { email } = await fx.person(fx.labA.id, 'analyst');
    const free = POLICIES.loginAccount.free;
    for (let i = 0; i < free - 1; i++) expect((await login(email, 'nope ' + i)).status).toBe(401);
    expect((await login(email, TEST_PASSWORD)).status).toBe(200);
    // Without the reset, this would be failure number 2·free − 1 and locked.
    for (let i = 0; i < free - 1; i++) expect((await login(email, 'nope again ' + i)).status).toBe(401);
    expect((await login(email, TEST_PASSWORD)).status).toBe(200);
  });

  it('the lockout grows with further failures but stays capped', async () => {
    const { email } = await fx.person(fx.labA.id, 'analyst');
    const p = POLICIES.loginAccount;
    const key = [{ key: `login:account:${email}`, policy: p }];
    // Earlier failures counted straight into the limiter (each API failure would cost a password hash).
    for (let i = 0; i < p.free + 20; i++) await fx.ctx.limiter.fail(key);
    const res = await login(email, TEST_PASSWORD, '10.0.2.2');
    expect(res.status).toBe(429);
    expect(Number(res.headers['retry-after'])).toBe(p.capSeconds);
    fx.advance(p.capSeconds * 1000 + 1);
    expect((await login(email, TEST_PASSWORD, '10.0.2.3')).status).toBe(200);
  });

  it('limits one address trying many accounts; another address is not affected', async () => {
    const p = POLICIES.loginAddress;
    for (let i = 0; i < p.free; i++) await fx.ctx.limiter.fail([{ key: 'login:address:10.9.9.9', policy: p }]);
    const res = await login(fx.people.viewer.email, TEST_PASSWORD, '10.9.9.9');
    expect(res.status).toBe(429);
    expect(Number(res.headers['retry-after'])).toBe(p.baseSeconds);
    expect((await login(fx.people.viewer.email, TEST_PASSWORD, '10.9.9.10')).status).toBe(200);
  });

  it('counts wrong passwords from one address toward that address', async () => {
    const before = await fx.database.query<{ failures: number }>("select failures from rate_limits where key = 'login:address:10.8.8.8'");
    expect(before).toEqual([]);
    expect((await login(fx.people.manager.email, 'wrong', '10.8.8.8')).status).toBe(401);
    const after = await fx.database.query<{ failures: number }>("select failures from rate_limits where key = 'login:address:10.8.8.8'");
    expect(after[0].failures).toBe(1);
  });

  it('limits reset requests per account and still answers the same for unknown addresses', async () => {
    const { email } = await fx.person(fx.labA.id, 'analyst');
    const free = POLICIES.resetAccount.free;
    for (let i = 0; i < free; i++) {
      expect((await fx.api().post('/api/auth/password/forgot').set('x-forwarded-for', `10.3.0.${i}`).send({ email })).status).toBe(202);
    }
    const res = await fx.api().post('/api/auth/password/forgot').set('x-forwarded-for', '10.3.1.1').send({ email });
    expect(res.status).toBe(429);
    // Retry-After in delay-seconds (RFC 9110 §10.2.3): a whole number, > 0, never beyond the policy's window.
    const retryAfter = res.headers['retry-after'];
    expect(retryAfter).toMatch(/^\d+$/);
    expect(Number(retryAfter)).toBeGreaterThan(0);
    expect(Number(retryAfter)).toBeLessThanOrEqual(POLICIES.resetAccount.windowSeconds);
    // The first lock after the free requests is the policy's base (lockSeconds above), as the body says too.
    expect(Number(retryAfter)).toBe(POLICIES.resetAccount.baseSeconds);
    expect(res.body.error).toMatchObject({ code: 'too_many_attempts', details: { retryAfterSeconds: Number(retryAfter) } });
  });
});
