import { randomBytes, scrypt as scryptCb, timingSafeEqual, type ScryptOptions } from 'node:crypto';

/**
 * scrypt at OWASP's current minimum for password storage (N = 2^17, r = 8, p = 1).
 * The encoded form carries its parameters so they can be raised later without breaking old hashes.
 */
export const SCRYPT_PARAMS = { N: 2 ** 17, r: 8, p: 1, keyLength: 32, saltLength: 16 } as const;

function scrypt(password: string, salt: Buffer, keyLength: number, opts: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scryptCb(password.normalize('NFKC'), salt, keyLength, opts, (err, key) => (err ? reject(err) : resolve(key))),
  );
}

export interface ScryptCost {
  N: number;
  r: number;
  p: number;
  keyLength: number;
  saltLength: number;
}

const maxmem = (N: number, r: number) => 128 * N * r * 2;

/** `params` other than the default is for test fixtures only (verification reads the cost from the stored hash). */
export async function hashPassword(password: string, params: typeof SCRYPT_PARAMS | ScryptCost = SCRYPT_PARAMS): Promise<string> {
  const { N, r, p, keyLength, saltLength } = params;
  const salt = randomBytes(saltLength);
  const key = await scrypt(password, salt, keyLength, { N, r, p, maxmem: maxmem(N, r) });
  return `scrypt$${N}$${r}$${p}$${salt.toString('base64url')}$${key.toString('base64url')}`;
}

export async function verifyPassword(password: string, encoded: string | null | undefined): Promise<boolean> {
  if (!encoded) return false;
  const parts = encoded.split('$');
  if (parts.length !== 6 || parts[0] !== 'scrypt') return false;
  const [, n, r, p, saltB64, keyB64] = parts;
  const N = Number(n);
  const R = Number(r);
  const P = Number(p);
  const expected = Buffer.from(keyB64, 'base64url');
  const key = await scrypt(password, Buffer.from(saltB64, 'base64url'), expected.length, {
    N,
    r: R,
    p: P,
    maxmem: maxmem(N, R),
  });
  return key.length === expected.length && timingSafeEqual(key, expected);
}

export function parseHashParams(encoded: string): { N: number; r: number; p: number; keyLength: number } {
  const [, n, r, p, , keyB64] = encoded.split('$');
  return { N: Number(n), r: Number(r), p: Number(p), keyLength: Buffer.from(keyB64, 'base64url').length };
}
