import { apiErrorSchema } from '../../shared/schemas/api';
import { sessionResponseSchema, type SessionResponse } from '../../shared/schemas/auth';
import { useSession } from '../state/session';
import { ApiRequestError } from './errors';

export { ApiRequestError };

const BASE = '/api';

/** The server's error shape of a failed response as an ApiRequestError. */
export async function parseError(res: Response): Promise<ApiRequestError> {
  let body: unknown;
  try {
    body = await res.json();
  } catch {
    body = undefined;
  }
  const parsed = apiErrorSchema.safeParse(body);
  if (parsed.success) {
    const { code, message, details } = parsed.data.error;
    return new ApiRequestError(res.status, code, message, Array.isArray(details) ? (details as never) : undefined);
  }
  return new ApiRequestError(res.status, 'http_error', `The server answered ${res.status}.`);
}

async function rawFetch(path: string, init: RequestInit): Promise<Response> {
  try {
    // same-origin: the refresh cookie (Path=/api/auth) goes along only to the auth routes.
    return await fetch(`${BASE}${path}`, { credentials: 'same-origin', ...init });
  } catch {
    throw new ApiRequestError(0, 'offline', 'The server cannot be reached. Your work on this device is kept.');
  }
}

let refreshing: Promise<SessionResponse | null> | null = null;

/**
 * Trades the refresh cookie for a new access token. One at a time: two parallel refreshes would present the same
 * token twice, which the server treats as theft and answers by ending the session.
 */
export function refreshSession(): Promise<SessionResponse | null> {
  refreshing ??= (async () => {
    try {
      const res = await rawFetch('/auth/refresh', { method: 'POST' });
      if (!res.ok) {
        if (res.status === 401) useSession.getState().signOutLocally(true);
        return null;
      }
      const session = sessionResponseSchema.parse(await res.json());
      useSession.getState().setSession(session);
      return session;
    } catch (err) {
      if (err instanceof ApiRequestError && err.code === 'offline') return null; // keep the last session offline
      throw err;
    } finally {
      refreshing = null;
    }
  })();
  return refreshing;
}

export interface RequestOptions {
  method?: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
  body?: unknown;
  /** Public routes skip the token and the refresh. */
  anonymous?: boolean;
}

/**
 * A request to the API with the access token (refreshed ahead of expiry, and once more on a 401), answering the raw
 * Response: for bodies read as a stream (the live follow of a run) as well as JSON.
 */
export async function authorizedFetch(path: string, init: RequestInit & { anonymous?: boolean } = {}): Promise<Response> {
  const { anonymous, headers, ...rest } = init;
  const send = (token: string | null) =>
    rawFetch(path, { ...rest, headers: { ...(headers as Record<string, string>), ...(token && !anonymous ? { authorization: `Bearer ${token}` } : {}) } });

  let token = useSession.getState().accessToken;
  const expiresAt = useSession.getState().accessTokenExpiresAt;
  // Refresh ahead of expiry (or after a reload, when only the cookie is left) instead of waiting for a 401.
  if (!anonymous && (!token || (expiresAt && Date.parse(expiresAt) - Date.now() < 30_000))) {
    token = (await refreshSession())?.accessToken ?? token;
  }
  let res = await send(token);
  if (res.status === 401 && !anonymous) {
    const again = await refreshSession();
    if (again) res = await send(again.accessToken);
  }
  return res;
}

/** JSON request to the API with the access token; on 401 it refreshes once through the cookie and retries. */
export async function api<T>(path: string, opts: RequestOptions = {}): Promise<T> {
  const res = await authorizedFetch(path, {
    method: opts.method ?? 'GET',
    anonymous: opts.anonymous,
    headers: {
      accept: 'application/json',
      ...(opts.body !== undefined ? { 'content-type': 'application/json' } : {}),
    },
    body: opts.body !== undefined ? JSON.stringify(opts.body) : undefined,
  });
  if (!res.ok) throw await parseError(res);
  if (res.status === 204) return undefined as T;
  return (await res.json()) as T;
}
