import { eq } from 'drizzle-orm';
import type { PgColumn, PgTable } from 'drizzle-orm/pg-core';
import type { Request, Response, Router } from 'express';
import type { z } from 'zod';
import type { Role } from '../../shared/schemas/roles';
import type { ServerContext } from '../auth/context';
import * as sessionsRepo from '../repos/sessions';
import { HttpError, forbidden, notFound } from './errors';

/**
 * The route table: every API route states who may call it, and `mountRoutes` enforces that before the handler runs.
 * server/http/route-matrix.test.ts generates the route × role × lab matrix from `apiRoutes`. See README.md here.
 *
 * - 'public'   anyone, signed in or not
 * - 'signedIn' any signed-in user, whatever their labs
 * - roles      a member of the route's lab holding one of these roles; the lab comes from `labParam` (a path
 *              parameter naming the lab) or `labOf` (finds the lab of the record the path names). Not a member of
 *              that lab, or no such record: 404, the same answer, so ids of other labs cannot be probed. A member
 *              with another role: 403.
 */
export type Access = 'public' | 'signedIn' | readonly Role[];
export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface Caller {
  userId: string;
  sessionId: string;
  email: string;
  displayName: string;
  labs: readonly { labId: string; labName: string; isDemo: boolean; role: Role }[];
  roleIn(labId: string): Role | undefined;
}

export interface RouteContext<B, Q> {
  req: Request;
  res: Response;
  app: ServerContext;
  /** Null only on public routes. */
  caller: Caller | null;
  body: B;
  query: Q;
  params: Record<string, string>;
  /** The lab the access check resolved (role routes only), and the caller's role in it. */
  lab: { id: string; role: Role } | null;
}

export interface RouteDef<B = unknown, Q = unknown> {
  method: Method;
  /** Path under /api, Express syntax. */
  path: string;
  access: Access;
  labParam?: string;
  labOf?: (params: Record<string, string>, app: ServerContext) => Promise<string | null | undefined>;
  body?: z.ZodType<B>;
  /**
   * Parses the body in place of `body.parse` (same result, same errors): a quicker path for a hot route. `body`
   * stays the contract (the fuzz suite and the route matrix read it).
   */
  parseBody?: (raw: unknown) => B;
  query?: z.ZodType<Q>;
  /** Success status (default 200; 204 sends no body). */
  status?: number;
  /** Mounted only outside production. */
  devOnly?: boolean;
  /**
   * A write that can never end a session or change an account or a membership: the cached access checks outlive
   * it (a device's pushes come in a row; each would otherwise read its session again). Lab lists are dropped as
   * after any write.
   */
  keepsAccess?: boolean;
  summary: string;
  /** Returns the JSON body, or sends the response itself via ctx.res. */
  handler: (ctx: RouteContext<B, Q>) => unknown;
}

/** A reply already serialised to JSON (a cached answer): sent as it is, not stringified again per request. */
export class JsonText {
  constructor(readonly text: string) {}
}

/** Declares a route; typing only, so definitions can live at module level and be listed by tests. */
export function route<B = undefined, Q = undefined>(def: RouteDef<B, Q>): RouteDef {
  const roles = Array.isArray(def.access) ? def.access : [];
  if (roles.length && !def.labParam && !def.labOf) {
    throw new Error(`${def.method.toUpperCase()} ${def.path}: a role-restricted route needs labParam or labOf.`);
  }
  if (Array.isArray(def.access) && roles.length === 0) throw new Error(`${def.path}: empty role list.`);
  return def as unknown as RouteDef;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
export const isUuid = (s: unknown): s is string => typeof s === 'string' && UUID.test(s);

/** A `labOf` resolver for records with a lab_id column, e.g. `labOf: recordLab(runs, runs.id, runs.labId, 'runId')`. */
export function recordLab(table: PgTable, idColumn: PgColumn, labColumn: PgColumn, param: string): RouteDef['labOf'] {
  return async (params, app) => {
    const id = params[param];
    if (!isUuid(id)) return null;
    const rows = (await app.database.db
      .select({ labId: labColumn })
      .from(table as never)
      .where(eq(idColumn, id))
      .limit(1)) as { labId: string }[];
    return rows[0]?.labId ?? null;
  };
}

const unauthenticated = (invalid: boolean) =>
  new HttpError(
    401,
    invalid ? 'invalid_token' : 'unauthenticated',
    invalid ? 'Your sign-in has expired or was ended. Sign in again.' : 'Sign in to do this.',
    undefined,
    { 'WWW-Authenticate': invalid ? 'Bearer error="invalid_token"' : 'Bearer' },
  );

/**
 * Verifies the bearer access token and checks the session and account it names on every request, so signing out,
 * a detected refresh-token reuse or disabling the account ends access at once, not when the token expires.
 */
export class Authenticator {
  constructor(private readonly app: ServerContext) {}

  /** The caller, null when no token was sent; a token that fails any check throws 401. */
  async caller(req: Request): Promise<Caller | null> {
    const header = req.get('authorization');
    if (!header) return null;
    const m = /^Bearer ([A-Za-z0-9._~+/=-]+)$/.exec(header);
    if (!m) throw unauthenticated(true);
    const claims = await (await this.app.signer()).verify(m[1]);
    if (!claims || !isUuid(claims.sessionId) || !isUuid(claims.userId)) throw unauthenticated(true);
    // Cached per user until the session, the account or a membership changes (a trigger announces it).
    const state = await this.app.sessionCache.get(claims.userId, claims.sessionId, () =>
      sessionsRepo.sessionState(this.app.database.db, claims.sessionId, claims.userId),
    );
    const now = this.app.now().getTime();
    if (!state || state.revokedAt || state.disabledAt || state.expiresAt.getTime() <= now) throw unauthenticated(true);
    const labs = state.labs;
    const roles = new Map(labs.map((l) => [l.labId, l.role]));
    return {
      userId: claims.userId,
      sessionId: claims.sessionId,
      email: state.email,
      displayName: state.displayName,
      labs,
      roleIn: (labId) => roles.get(labId),
    };
  }
}

/** Mounts the routes on an Express router with their access checks, input parsing and the JSON reply. */
export function mountRoutes(router: Router, defs: RouteDef[], app: ServerContext): void {
  const authenticator = new Authenticator(app);
  for (const def of defs) {
    router[def.method](def.path, async (req: Request, res: Response) => {
      res.setHeader('Cache-Control', 'no-store');
      const params = req.params as Record<string, string>;
      let caller: Caller | null = null;
      let lab: RouteContext<unknown, unknown>['lab'] = null;
      if (def.access !== 'public') {
        caller = await authenticator.caller(req);
        if (!caller) throw unauthenticated(false);
        if (Array.isArray(def.access)) {
          const labId = def.labParam ? params[def.labParam] : await def.labOf!(params, app);
          const role = isUuid(labId) ? caller.roleIn(labId) : undefined;
          if (!labId || !role) throw notFound();
          if (!(def.access as readonly Role[]).includes(role)) throw forbidden();
          lab = { id: labId, role };
        }
      }
      const body = def.parseBody ? def.parseBody(req.body ?? {}) : def.body ? def.body.parse(req.body ?? {}) : undefined;
      const query = def.query ? def.query.parse(req.query ?? {}) : undefined;
      let result: unknown;
      try {
        result = await def.handler({ req, res, app, caller, body, query, params, lab });
      } finally {
        // A write may have committed (even if the handler failed after it): this instance's cached answers must not
        // outlive it, though the notification of the commit may reach its listener a moment later. The lists of the
        // route's lab (of every lab when the route names none); every access check, as a write may end a session or
        // change a membership (unless the route says it never does: keepsAccess). Other instances hear of it by NOTIFY.
        if (def.method !== 'get') {
          if (lab) app.labCache.invalidate(lab.id);
          else app.labCache.invalidateAll();
          if (!def.keepsAccess) app.sessionCache.invalidateAll();
        }
      }
      if (res.headersSent) return;
      const status = def.status ?? 200;
      if (status === 204) res.status(204).end();
      else if (result instanceof JsonText) res.status(status).type('application/json').send(result.text);
      else res.status(status).json(result ?? {});
    });
  }
}

export const describeRoute = (r: Pick<RouteDef, 'method' | 'path'>) => `${r.method.toUpperCase()} ${r.path}`;
