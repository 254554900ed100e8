// The sync API over fetch: POST /api/sync/push and GET /api/sync/pull, answers checked with the shared schemas.
// Failures are sorted into what the engine acts on: offline (retry when online), auth (wait for sign-in),
// server (back off and retry), client (a request the server will never take; reported).
import { pullResponseSchema, pushResponseSchema, type PullResponse, type PushRequest, type PushResponse } from '../../shared/schemas/sync';
import { TransportError, type SyncTransport } from './engine';

export interface HttpTransportOptions {
  /** Origin of the server; '' for the page's own. */
  baseUrl?: string;
  /** The bearer access token, refreshed by the accounts client; null when signed out. */
  accessToken: () => Promise<string | null>;
  /** Called once on a 401 for a fresh token (the accounts client's refresh); null: signed out. */
  refresh?: () => Promise<string | null>;
  fetch?: typeof fetch;
}

export function httpTransport(o: HttpTransportOptions): SyncTransport {
  const f = o.fetch ?? fetch;
  async function send(path: string, init: RequestInit, token: string): Promise<Response> {
    try {
      return await f(`${o.baseUrl ?? ''}/api${path}`, {
        ...init,
        headers: { accept: 'application/json', authorization: `Bearer ${token}`, ...(init.body ? { 'content-type': 'application/json' } : {}) },
      });
    } catch (err) {
      throw new TransportError('offline', err instanceof Error ? err.message : 'The server could not be reached.');
    }
  }
  async function call(path: string, init: RequestInit): Promise<unknown> {
    let token = (await o.accessToken()) ?? (await o.refresh?.()) ?? null;
    if (!token) throw new TransportError('auth', 'Not signed in.');
    let res = await send(path, init, token);
    if (res.status === 401 && o.refresh) {
      token = await o.refresh();
      if (token) res = await send(path, init, token);
    }
    const body = await res.json().catch(() => null);
    if (res.ok) return body;
    const message = (body as { error?: { message?: string } } | null)?.error?.message ?? `HTTP ${res.status}`;
    if (res.status === 401) throw new TransportError('auth', message, 401);
    if (res.status >= 500 || res.status === 429 || res.status === 408) throw new TransportError('server', message, res.status);
    throw new TransportError('client', message, res.status);
  }
  return {
    async push(req: PushRequest): Promise<PushResponse> {
      return pushResponseSchema.parse(await call('/sync/push', { method: 'POST', body: JSON.stringify(req) }));
    },
    async pull(cursor: number, limit: number): Promise<PullResponse> {
      return pullResponseSchema.parse(await call(`/sync/pull?cursor=${cursor}&limit=${limit}`, { method: 'GET' }));
    },
  };
}
