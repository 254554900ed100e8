import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { runs } from '../../db/schema';
import { apiRouter, apiRoutes } from '../api';
import { calibrationMatrix } from '../api/calibrations.matrix';
import { deskMatrix } from '../api/desk.matrix';
import { authFixture, TEST_PASSWORD, type AuthFixture } from '../auth/test-fixture';
import { closeTemplate } from '../testing/db';
import { describeRoute, type RouteDef } from './routes';

/**
 * Route × caller × lab matrix, generated from the route table (server/api/index.ts apiRoutes).
 * Every declared route must have an entry in `matrix` below, or this file fails: adding a route means stating
 * here, cell by cell, which status each caller gets. Callers: signed out, and the analyst, manager and viewer of
 * lab A. "own" targets lab A, "other" targets lab B, where none of them is a member.
 */
type Caller = 'signedOut' | 'analyst' | 'manager' | 'viewer';
const CALLERS: Caller[] = ['signedOut', 'analyst', 'manager', 'viewer'];
type Row = Record<Caller, number>;
type Target = 'own' | 'other';

interface Req {
  params?: Record<string, string>;
  body?: unknown;
  cookie?: string;
}
interface Expectation {
  /** Builds a valid request for that lab; runs once per cell, so state-changing routes get fresh targets. */
  request: (fx: AuthFixture, lab: { id: string; target: Target }) => Promise<Req> | Req;
  /** Routes of no lab (public, signed-in) have one row, run against both targets' requests alike. */
  own: Row;
  other?: Row;
  /** What the answer must say beyond its status, for routes whose status alone does not show the caller's rights. */
  check?: (res: { status: number; body: unknown }, cell: { caller: Caller; target: Target; req: Req }) => Promise<void> | void;
}

const uniq = () => Math.random().toString(36).slice(2, 10);
const MEMBER_ONLY_OTHER: Row = { signedOut: 401, analyst: 404, manager: 404, viewer: 404 };
const MANAGER_ONLY: Row = { signedOut: 401, analyst: 403, manager: 200, viewer: 403 };

/** A member of the target lab, created fresh so each cell changes its own. */
async function freshMember(fx: AuthFixture, labId: string) {
  return (await fx.person(labId, 'analyst')).id;
}

const matrix: Record<string, Expectation> = {
  'GET /health': { request: () => ({}), own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 } },
  'GET /dev/mailbox': { request: () => ({}), own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 } },
  'POST /auth/login': {
    request: (fx) => ({ body: { email: fx.people.analyst.email, password: TEST_PASSWORD } }),
    own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 },
  },
  'POST /auth/refresh': {
    request: async (fx) => ({ cookie: (await fx.session(fx.people.viewer.id)).refreshCookie }),
    own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 },
  },
  'POST /auth/logout': {
    request: async (fx) => ({ cookie: (await fx.session(fx.people.viewer.id)).refreshCookie }),
    own: { signedOut: 204, analyst: 204, manager: 204, viewer: 204 },
  },
  'GET /auth/me': { request: () => ({}), own: { signedOut: 401, analyst: 200, manager: 200, viewer: 200 } },
  'POST /auth/password/forgot': {
    request: () => ({ body: { email: `nobody-${uniq()}@example.org` } }),
    own: { signedOut: 202, analyst: 202, manager: 202, viewer: 202 },
  },
  'POST /auth/password/reset': {
    request: async (fx) => {
      const p = await fx.person(null, 'analyst');
      return { body: { token: await fx.resetToken(p.id), password: 'a fresh passphrase' } };
    },
    own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 },
  },
  'GET /auth/invitations/:token': {
    request: async (fx, lab) => ({ params: { token: (await fx.invitation(lab.id, `new-${uniq()}@example.org`)).token } }),
    own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 },
  },
  'POST /auth/invitations/:token/accept': {
    request: async (fx, lab) => ({
      params: { token: (await fx.invitation(lab.id, `new-${uniq()}@example.org`)).token },
      body: { displayName: 'New Person', password: 'a fresh passphrase' },
    }),
    own: { signedOut: 200, analyst: 200, manager: 200, viewer: 200 },
  },
  'GET /labs/:labId/members': {
    request: (_fx, lab) => ({ params: { labId: lab.id } }),
    own: { signedOut: 401, analyst: 200, manager: 200, viewer: 200 },
    other: MEMBER_ONLY_OTHER,
  },
  'PATCH /labs/:labId/members/:userId': {
    request: async (fx, lab) => ({ params: { labId: lab.id, userId: await freshMember(fx, lab.id) }, body: { role: 'viewer' } }),
    own: MANAGER_ONLY,
    other: MEMBER_ONLY_OTHER,
  },
  'POST /labs/:labId/members/:userId/disable': {
    request: async (fx, lab) => ({ params: { labId: lab.id, userId: await freshMember(fx, lab.id) } }),
    own: MANAGER_ONLY,
    other: MEMBER_ONLY_OTHER,
  },
  'POST /labs/:labId/members/:userId/enable': {
    request: async (fx, lab) => ({ params: { labId: lab.id, userId: await freshMember(fx, lab.id) } }),
    own: MANAGER_ONLY,
    other: MEMBER_ONLY_OTHER,
  },
  'GET /labs/:labId/invitations': {
    request: (_fx, lab) => ({ params: { labId: lab.id } }),
    own: MANAGER_ONLY,
    other: MEMBER_ONLY_OTHER,
  },
  'POST /labs/:labId/invitations': {
    request: (_fx, lab) => ({ params: { labId: lab.id }, body: { email: `invitee-${uniq()}@example.org`, role: 'analyst' } }),
    own: { ...MANAGER_ONLY, manager: 201 },
    other: MEMBER_ONLY_OTHER,
  },
  'DELETE /labs/:labId/invitations/:invitationId': {
    request: async (fx, lab) => ({
      params: { labId: lab.id, invitationId: (await fx.invitation(lab.id, `x-${uniq()}@example.org`)).id },
    }),
    own: { ...MANAGER_ONLY, manager: 204 },
    other: MEMBER_ONLY_OTHER,
  },
  'GET /labs/:labId/audit': {
    request: (_fx, lab) => ({ params: { labId: lab.id } }),
    own: MANAGER_ONLY,
    other: MEMBER_ONLY_OTHER,
  },
  ...calibrationMatrix,
  ...deskMatrix,
  // Sync: push is open to any signed-in user; each change is checked against the caller's lab role inside the batch,
  // so the 200 says nothing about rights: the change's own outcome does (a viewer's run "rejected" 403 with the
  // permission reason and not stored; an analyst's or manager's "accepted" 201 and stored).
  'POST /sync/push': {
    request: (_fx, lab) => ({ body: { deviceId: randomUUID(), sentAt: Date.now(), changes: [{ id: randomUUID(), kind: 'run', seq: 1, recordedAt: Date.now(), payload: { labId: lab.id, sampleName: 'matrix run' } }] } }),
    own: { signedOut: 401, analyst: 200, manager: 200, viewer: 200 },
    check: async (res, { caller, req }) => {
      if (caller === 'signedOut') return;
      const changeId = (req.body as { changes: { id: string }[] }).changes[0].id;
      const results = (res.body as { results: { id: string; outcome: string; status: number; reason?: string }[] }).results;
      expect(results).toHaveLength(1);
      expect(results[0].id).toBe(changeId);
      const stored = await fx.database.db.select({ id: runs.id, analystId: runs.analystId }).from(runs).where(eq(runs.id, changeId));
      if (caller === 'viewer') {
        expect(results[0]).toMatchObject({ outcome: 'rejected', status: 403, reason: 'A viewer cannot record runs.' });
        expect(stored).toEqual([]);
      } else {
        expect(results[0]).toMatchObject({ outcome: 'accepted', status: 201 });
        expect(results[0].reason).toBeUndefined();
        expect(stored).toEqual([{ id: changeId, analystId: fx.people[caller].id }]);
      }
    },
  },
  'GET /sync/pull': { request: () => ({}), own: { signedOut: 401, analyst: 200, manager: 200, viewer: 200 } },
  'GET /runs/:runId/live': {
    request: async (fx, lab) => ({ params: { runId: await matrixRun(fx, lab.id) } }),
    own: { signedOut: 401, analyst: 200, manager: 200, viewer: 200 },
    other: MEMBER_ONLY_OTHER,
  },
};

/** A run in the lab, inserted directly (its analyst: lab A's analyst, or lab B's manager). */
async function matrixRun(fx: AuthFixture, labId: string): Promise<string> {
  const analystId = labId === fx.labA.id ? fx.people.analyst.id : fx.people.managerB.id;
  const [r] = await fx.database.db.insert(runs).values({ id: randomUUID(), labId, analystId, sampleName: 'matrix run' }).returning();
  return r.id;
}

function fillPath(path: string, params: Record<string, string> = {}): string {
  return path.replace(/:(\w+)/g, (_m, name: string) => {
    if (!(name in params)) throw new Error(`matrix request for ${path} gives no :${name}`);
    return encodeURIComponent(params[name]);
  });
}

let fx: AuthFixture;

beforeAll(async () => {
  fx = await authFixture();
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

async function call(def: RouteDef, caller: Caller, req: Req) {
  let r = fx.api()[def.method](`/api${fillPath(def.path, req.params)}`).set('accept', 'application/json');
  // A fresh session per cell: signing out (one of the cells) rightly ends the caller's session too.
  if (caller !== 'signedOut') r = r.set('authorization', `Bearer ${(await fx.session(fx.people[caller].id)).accessToken}`);
  if (req.cookie) r = r.set('cookie', req.cookie);
  if (req.body !== undefined) r = r.send(req.body as object);
  return r;
}

describe('route matrix (generated from apiRoutes)', () => {
  it('every declared route has a matrix entry, and every entry a route', () => {
    const declared = apiRoutes.map(describeRoute);
    expect(declared.filter((k) => !(k in matrix)), 'routes without a matrix expectation').toEqual([]);
    expect(Object.keys(matrix).filter((k) => !declared.includes(k)), 'matrix entries without a route').toEqual([]);
    expect(new Set(declared).size).toBe(declared.length);
  });

  it('the API router mounts only declared routes (nothing bypasses the route table)', () => {
    type Layer = { route?: { path: string; methods: Record<string, boolean> }; name?: string };
    const router = apiRouter({ database: fx.database, log: () => {} }) as unknown as { stack: Layer[] };
    const declared = new Set(apiRoutes.map(describeRoute));
    const mounted = router.stack.map((layer) => {
      expect(layer.route, `router layer "${layer.name}" is not a declared route`).toBeDefined();
      const method = Object.keys(layer.route!.methods).find((m) => m !== '_all')!;
      return `${method.toUpperCase()} ${layer.route!.path}`;
    });
    expect(mounted.filter((m) => !declared.has(m))).toEqual([]);
    expect(mounted.length).toBe(declared.size);
  });

  for (const def of apiRoutes) {
    const key = describeRoute(def);
    const exp = matrix[key];
    describe(key, () => {
      if (!exp) {
        it('has a matrix expectation', () => expect.fail(`add "${key}" to the matrix in route-matrix.test.ts`));
        return;
      }
      const targets: Target[] = exp.other ? ['own', 'other'] : ['own'];
      if (Array.isArray(def.access) && !exp.other) {
        it('a lab route states its other-lab row', () => expect.fail(`"${key}" needs an "other" row`));
      }
      for (const target of targets) {
        const row = target === 'own' ? exp.own : exp.other!;
        for (const caller of CALLERS) {
          it(`${caller} · ${target} lab → ${row[caller]}`, async () => {
            const lab = target === 'own' ? fx.labA : fx.labB;
            const req = await exp.request(fx, { id: lab.id, target });
            const res = await call(def, caller, req);
            expect(res.status, JSON.stringify(res.body)).toBe(row[caller]);
            if (res.status >= 400) expect(res.body.error?.code).toEqual(expect.any(String));
            await exp.check?.(res, { caller, target, req });
          });
        }
      }
    });
  }
});
