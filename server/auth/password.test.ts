import { describe, expect, it } from 'vitest';
import { hashPassword, parseHashParams, SCRYPT_PARAMS, verifyPassword } from './password';
import { HttpError } from '../http/errors';
import { assertAcceptablePassword, isCommonPassword } from './password-policy';

describe('password hashing', () => {
  it('uses scrypt at the OWASP Password Storage Cheat Sheet minimum (N=2^17, r=8, p=1) and a random salt', async () => {
    expect(SCRYPT_PARAMS).toMatchObject({ N: 131072, r: 8, p: 1 });
    const a = await hashPassword('a long enough passphrase');
    expect(a.startsWith('scrypt$131072$8$1$')).toBe(true);
    expect(parseHashParams(a)).toEqual({ N: 131072, r: 8, p: 1, keyLength: 32 });
    expect(await verifyPassword('a long enough passphrase', a)).toBe(true);
    expect(await verifyPassword('a long enough passphrasE', a)).toBe(false);
    const b = await hashPassword('a long enough passphrase');
    expect(b).not.toBe(a); // salted
  });

  it('refuses malformed stored hashes without throwing', async () => {
    expect(await verifyPassword('x', null)).toBe(false);
    expect(await verifyPassword('x', 'bcrypt$whatever')).toBe(false);
  });
});

/** The error assertAcceptablePassword throws (fails the test when it throws none, or not an HttpError). */
function refusal(password: string, email?: string): HttpError {
  try {
    assertAcceptablePassword(password, email);
  } catch (err) {
    expect(err).toBeInstanceOf(HttpError);
    return err as HttpError;
  }
  throw new Error(`"${password}" was accepted`);
}

describe('password policy', () => {
  it('refuses common passwords in any case, and the address itself', () => {
    expect(isCommonPassword('password1')).toBe(true);
    expect(isCommonPassword('PassWord123')).toBe(true);
    expect(isCommonPassword('qwertyuiop')).toBe(true);
    expect(refusal('12345678')).toMatchObject({ status: 400, code: 'weak_password', message: expect.stringMatching(/commonly used/) });
    expect(refusal('12345678').details).toEqual([expect.objectContaining({ path: 'password', code: 'weak_password', message: expect.stringMatching(/too common/) })]);
    // The account's own address, whole or its local part, in any case: refused, and told why (not "common").
    for (const own of ['kit.smith@example.org', 'Kit.Smith', 'KIT.SMITH@EXAMPLE.ORG']) {
      const err = refusal(own, 'kit.smith@example.org');
      expect(err, own).toMatchObject({ status: 400, code: 'weak_password', message: expect.stringMatching(/e-mail address/) });
      expect(err.message, own).not.toMatch(/common/);
      expect(err.details).toEqual([expect.objectContaining({ path: 'password', code: 'weak_password', message: expect.stringMatching(/e-mail address/i) })]);
    }
  });

  it('has no composition rules: long lowercase phrases and 64+ characters pass', () => {
    expect(() => assertAcceptablePassword('burette drips steadily at noon')).not.toThrow();
    expect(() => assertAcceptablePassword('x'.repeat(80))).not.toThrow();
  });
});
