import { createHash, randomBytes } from 'node:crypto';
import { SignJWT, jwtVerify, errors as joseErrors } from 'jose';

/**
 * Access tokens: short-lived JWTs, HS256 with a server secret. Verification pins algorithm, issuer, audience,
 * header type and a token-use claim (RFC 8725 §3.1, §3.8–3.11), so no other JWT (another service's, an unsigned one,
 * one signed with another algorithm) is ever taken for an access token.
 */
export const ACCESS_TOKEN = {
  alg: 'HS256',
  issuer: 'halfmark',
  audience: 'halfmark-api',
  /** Header type for access tokens per RFC 9068 §2.1. */
  typ: 'at+jwt',
  use: 'access',
  ttlSeconds: 10 * 60,
} as const;

const CLOCK_TOLERANCE_S = 5;

export interface AccessClaims {
  userId: string;
  sessionId: string;
}

export class TokenSigner {
  constructor(
    private readonly key: Uint8Array,
    private readonly now: () => Date = () => new Date(),
  ) {
    if (key.length < 32) throw new Error('The token-signing secret must be at least 32 bytes.');
  }

  async sign(claims: AccessClaims): Promise<{ token: string; expiresAt: Date }> {
    const iat = Math.floor(this.now().getTime() / 1000);
    const exp = iat + ACCESS_TOKEN.ttlSeconds;
    const token = await new SignJWT({ sid: claims.sessionId, token_use: ACCESS_TOKEN.use })
      .setProtectedHeader({ alg: ACCESS_TOKEN.alg, typ: ACCESS_TOKEN.typ })
      .setIssuer(ACCESS_TOKEN.issuer)
      .setAudience(ACCESS_TOKEN.audience)
      .setSubject(claims.userId)
      .setIssuedAt(iat)
      .setNotBefore(iat)
      .setExpirationTime(exp)
      .setJti(randomBytes(12).toString('base64url'))
      .sign(this.key);
    return { token, expiresAt: new Date(exp * 1000) };
  }

  /**
   * Tokens whose signature and claims checked out, by the exact token text, with their time window: a token keeps
   * its signature, so only the time checks are repeated on each use (the signature check is the costly part, about
   * half a millisecond through WebCrypto, on every request). Bounded; the oldest go first.
   */
  private readonly verified = new Map<string, { claims: AccessClaims; nbf: number; exp: number }>();
  private static readonly VERIFIED_MAX = 10_000;

  /** Returns the claims, or null for any token that is not a valid, current Halfmark access token. */
  async verify(token: string): Promise<AccessClaims | null> {
    const hit = this.verified.get(token);
    if (hit) {
      // jose's own rule with the same tolerance: not before nbf − 5 s, not at or after exp + 5 s.
      const now = Math.floor(this.now().getTime() / 1000);
      return hit.nbf <= now + CLOCK_TOLERANCE_S && hit.exp > now - CLOCK_TOLERANCE_S ? hit.claims : null;
    }
    try {
      const { payload } = await jwtVerify(token, this.key, {
        algorithms: [ACCESS_TOKEN.alg],
        issuer: ACCESS_TOKEN.issuer,
        audience: ACCESS_TOKEN.audience,
        typ: ACCESS_TOKEN.typ,
        requiredClaims: ['sub', 'sid', 'exp', 'iat', 'nbf', 'token_use'],
        currentDate: this.now(),
        clockTolerance: CLOCK_TOLERANCE_S,
      });
      if (payload.token_use !== ACCESS_TOKEN.use) return null;
      if (typeof payload.sub !== 'string' || typeof payload.sid !== 'string') return null;
      const claims = Object.freeze({ userId: payload.sub, sessionId: payload.sid });
      if (typeof payload.nbf === 'number' && typeof payload.exp === 'number') {
        if (this.verified.size >= TokenSigner.VERIFIED_MAX) this.verified.delete(this.verified.keys().next().value!);
        this.verified.set(token, { claims, nbf: payload.nbf, exp: payload.exp });
      }
      return claims;
    } catch (err) {
      if (err instanceof joseErrors.JOSEError) return null;
      throw err;
    }
  }
}

/** Opaque single-use tokens (refresh, invitation, reset): 256 random bits; only their SHA-256 is stored. */
export function newOpaqueToken(): { token: string; hash: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, hash: hashOpaqueToken(token) };
}

export function hashOpaqueToken(token: string): string {
  return createHash('sha256').update(token).digest('base64url');
}
