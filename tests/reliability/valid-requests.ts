import { desc, eq } from 'drizzle-orm';
import type { Response } from 'supertest';
import { v7 } from 'uuid';
import { runs } from '../../db/schema';
import { runRevisions } from '../../db/schema/desk';
import { TEST_PASSWORD, type AuthFixture, type Person } from '../../server/auth/test-fixture';
import {
  DELIVERIES,
  DROP_TAPS,
  ELECTRODE_POINTS,
  IMPORT_SETUP,
  MARK_POINTS,
  QUAM_A2,
  type LabRecords,
} from './records';

/**
 * A known-valid request for every API route (bodies and queries as the API tests send them), built fresh for each
 * use where the lab keeps names unique or a token works once, and the real ids of lab A each path parameter takes.
 * The fuzz suite sends these as they are, or changed one field at a time.
 */
export interface Example {
  body?: unknown;
  query?: Record<string, unknown>;
  /** Sent as the Cookie header (the refresh cookie of the auth routes). */
  cookie?: string;
}

export interface Ctx {
  fx: AuthFixture;
  /** Lab A: its ids are handed out. Lab B: the wrong lab's ids. */
  a: LabRecords;
  b: LabRecords;
  /** A different suffix on every call, for names a lab keeps unique. */
  uniq(): string;
  /** The lab A manager's access token of the route being fuzzed (to bring records to a state through the API). */
  token(): string;
  /** An account in no lab: the password-reset route may change its password and end its sessions. */
  resetUser: Person;
  /** Ends every rate-limit lock (the fixture's clock stands still, so a lock would last for the rest of the run). */
  clearLimits(): Promise<void>;
}

type Build = (c: Ctx) => Example | Promise<Example>;
type IdOf = (c: Ctx, lab: LabRecords, n: number) => string | Promise<string>;

export interface RouteSpec {
  /** Valid requests; one is picked per request. */
  valid: Build[];
  /** Path parameters whose real id differs from the default of its name (a record used up, or a state needed). */
  ids?: Record<string, IdOf>;
  /** Brings lab A's records to the state the valid request needs (review routes), before each valid request. */
  prepare?: (c: Ctx) => Promise<void>;
  /** Multipart upload: the valid branch sends files instead of JSON bodies. */
  upload?: true;
  /** Why a lab-B record id under lab A's path may succeed here (otherwise it must never answer 2xx). */
  foreignOk?: string;
}

const later = (c: Ctx, days: number) => new Date(c.fx.now().getTime() + days * 86_400_000).toISOString();

/** The real id of lab `lab` a path parameter takes by default; `n` alternates between records of one kind. */
export function defaultId(param: string, path: string, lab: LabRecords, n: number): string {
  switch (param) {
    case 'labId':
      return lab.labId;
    case 'buretteId':
      return lab.buretteId;
    case 'settingId':
      return lab.settingId;
    case 'electrodeId':
      return lab.electrodeId;
    case 'lotId':
      return lab.lotId;
    case 'standardisationId':
      return lab.standardisationId;
    case 'invitationId':
      return lab.invitationId;
    case 'userId':
      return lab.memberId;
    case 'token':
      return lab.invitationToken;
    case 'runId':
      return n % 2 ? lab.importedRunId : lab.runId;
    case 'attachmentId':
      return n % 2 ? lab.calibrationAttachmentId : lab.runAttachmentId;
    case 'calibrationId': {
      const drip = Object.values(lab.dripCalibrations);
      if (path.includes('/drip-calibrations/')) return drip[n % drip.length];
      if (path.includes('/electrode-calibrations/')) return lab.electrodeCalibrationId;
      // Attachments of a calibration: the standardisation that has one, or a drip-rate calibration.
      return n % 2 ? drip[0] : lab.standardisationId;
    }
  }
  throw new Error(`no real id for :${param} in ${path}: add one in valid-requests.ts`);
}

const asManager = (c: Ctx, method: 'post', path: string, body: object) =>
  c.fx.api()[method](`/api${path}`).set('authorization', `Bearer ${c.token()}`).send(body);

/** Moves lab A's review run through the API until it is open (changeable), submitted or approved. */
async function bringReviewRun(c: Ctx, want: 'open' | 'submitted' | 'approved'): Promise<void> {
  const runId = c.a.reviewRunId;
  for (let step = 0; step < 4; step++) {
    const [run] = await c.fx.database.db.select({ status: runs.status }).from(runs).where(eq(runs.id, runId));
    const [rev] = await c.fx.database.db
      .select({ lockedAt: runRevisions.lockedAt })
      .from(runRevisions)
      .where(eq(runRevisions.runId, runId))
      .orderBy(desc(runRevisions.revision))
      .limit(1);
    const locked = Boolean(rev?.lockedAt);
    const submitted = !locked && run.status === 'submitted';
    if (want === 'approved' ? locked : want === 'submitted' ? submitted : !locked && !submitted) return;
    let res: Response;
    if (locked) res = await asManager(c, 'post', `/runs/${runId}/revisions`, { reason: 'fuzz: next revision' });
    else if (submitted) {
      res = want === 'approved' ? await asManager(c, 'post', `/runs/${runId}/approve`, { password: TEST_PASSWORD }) : await asManager(c, 'post', `/runs/${runId}/return`, { comment: 'fuzz: redo' });
    } else res = await asManager(c, 'post', `/runs/${runId}/submit`, { note: 'fuzz' });
    if (res.status === 429) {
      await c.clearLimits();
      continue;
    }
    if (res.status >= 300) throw new Error(`bringing the review run to ${want}: ${res.status} ${JSON.stringify(res.body)}`);
  }
  throw new Error(`the review run did not reach ${want}`);
}

const pushChanges = (c: Ctx) => {
  const runId = v7();
  const at = c.fx.now().getTime();
  const readingId = v7();
  const changes = [
    { kind: 'run', id: runId, payload: { labId: c.a.labId, sampleName: 'fuzz push', setup: { sample: { volumeMl: 25 } }, notes: 'pushed', status: 'recording' } },
    { kind: 'reading', id: readingId, payload: { runId, timeS: 0, pH: 3.1, mV: 220 } },
    { kind: 'reading', id: v7(), payload: { runId, timeS: 12.5, pH: 3.4 } },
    { kind: 'checkpoint', id: v7(), payload: { runId, timeS: 12.5, buretteMl: 0.62 } },
    { kind: 'correction', id: v7(), payload: { of: 'reading', runId, replacesId: readingId, reason: 'typed 3.1 for 3.0', pH: 3.0 } },
    { kind: 'run_event', id: v7(), payload: { runId, kind: 'pause', timeS: 20, detail: { why: 'refill' } } },
    { kind: 'run_meta_edit', id: v7(), payload: { runId, field: 'notes', value: 'edited on the phone', baseVersion: 1 } },
    { kind: 'run_meta_edit', id: v7(), payload: { runId, field: 'status', value: 'finished', baseVersion: null } },
    { kind: 'submission', id: v7(), payload: { runId, note: 'from the phone' } },
  ];
  return { deviceId: v7(), sentAt: at, changes: changes.map((ch, i) => ({ ...ch, seq: i + 1, recordedAt: at })) };
};

// The same with readings in a block (a device's usual push): the fuzz then mutates the block's columns too.
const pushBlock = (c: Ctx) => {
  const runId = v7();
  const at = c.fx.now().getTime();
  const run = { kind: 'run', id: runId, seq: 1, recordedAt: at, payload: { labId: c.a.labId, sampleName: 'fuzz block push', setup: {}, status: 'recording' } };
  const readings = [{ runId, ids: [v7(), v7(), v7()], seqs: [5, 9, 13], recordedAt: [at, at + 1, at + 2], timeS: [0, 1.5, 3], pH: [3.1, null, 3.3], mV: [null, 215, null] }];
  return { deviceId: v7(), sentAt: at, changes: [run], readings, answer: 'exceptions' };
};

const csv = (rows: number) => ['time_s,pH,note', ...Array.from({ length: rows }, (_v, i) => `${i * 10},${(3 + i * 0.25).toFixed(2)},ok`)].join('\n');

export const specs: Record<string, RouteSpec> = {
  'GET /health': { valid: [() => ({})] },
  'POST /auth/login': {
    valid: [(c) => ({ body: { email: c.fx.people.analyst.email, password: TEST_PASSWORD } }), (c) => ({ body: { email: c.fx.people.viewer.email.toUpperCase(), password: TEST_PASSWORD } })],
  },
  'POST /auth/refresh': { valid: [async (c) => ({ cookie: (await c.fx.session(c.fx.people.viewer.id)).refreshCookie })] },
  'POST /auth/logout': { valid: [async (c) => ({ cookie: (await c.fx.session(c.fx.people.viewer.id)).refreshCookie }), () => ({})] },
  'GET /auth/me': { valid: [() => ({})] },
  'POST /auth/password/forgot': { valid: [(c) => ({ body: { email: c.resetUser.email } }), (c) => ({ body: { email: `nobody-${c.uniq()}@example.org` } })] },
  'POST /auth/password/reset': {
    valid: [async (c) => ({ body: { token: await c.fx.resetToken(c.resetUser.id), password: 'a fresh passphrase' } })],
  },
  'GET /auth/invitations/:token': { valid: [() => ({})] },
  'POST /auth/invitations/:token/accept': {
    valid: [() => ({ body: { displayName: 'Fuzz Newcomer', password: 'a fresh passphrase' } })],
    // Accepting uses the invitation up: a new one per request.
    ids: { token: async (c, lab) => (await c.fx.invitation(lab.labId, `accept-${c.uniq()}@example.org`)).token },
  },
  'GET /labs/:labId/members': { valid: [() => ({})] },
  'PATCH /labs/:labId/members/:userId': { valid: [() => ({ body: { role: 'viewer' } }), () => ({ body: { role: 'analyst' } })] },
  // The manager's own account sometimes: disabling it is refused (409), enabling it changes nothing.
  'POST /labs/:labId/members/:userId/disable': { valid: [() => ({})], ids: { userId: (c, lab, n) => (n % 4 === 3 && lab === c.a ? c.fx.people.manager.id : lab.memberId) } },
  'POST /labs/:labId/members/:userId/enable': { valid: [() => ({})], ids: { userId: (c, lab, n) => (n % 4 === 3 && lab === c.a ? c.fx.people.manager.id : lab.memberId) } },
  'GET /labs/:labId/invitations': { valid: [() => ({})] },
  'POST /labs/:labId/invitations': { valid: [(c) => ({ body: { email: `invitee-${c.uniq()}@example.org`, role: 'analyst' } }), (c) => ({ body: { email: `viewer-${c.uniq()}@example.org`, role: 'viewer' } })] },
  'DELETE /labs/:labId/invitations/:invitationId': {
    valid: [() => ({})],
    // Withdrawing uses the invitation up: a new one per request.
    ids: { invitationId: async (c, lab) => (await c.fx.invitation(lab.labId, `withdrawn-${c.uniq()}@example.org`)).id },
  },
  'GET /labs/:labId/audit': { valid: [() => ({ query: { limit: '20' } }), (c) => ({ query: { before: c.a.auditEntryId, limit: '5' } }), () => ({ query: {} })] },

  'GET /labs/:labId/calibrations': { valid: [() => ({})] },
  'PUT /labs/:labId/calibration-settings': {
    valid: [
      () => ({ body: { dripRateMaxAgeDays: 30 } }),
      () => ({
        body: {
          dripRateMaxAgeDays: 30,
          electrodeMaxAgeHours: 24,
          standardisationMaxAgeDays: 14,
          gravimetricMaxRelSdPct: 1,
          gravimetricMinReplicates: 3,
          electrodeMinSlopePct: 95,
          electrodeMaxSlopePct: 105,
          electrodeMaxAbsOffsetMv: 30,
        },
      }),
    ],
  },
  'POST /labs/:labId/burettes': {
    valid: [
      (c) => ({ body: { identifier: `BU-${c.uniq()}`, capacityMl: 50, class: 'A' } }),
      (c) => ({ body: { identifier: `BU-${c.uniq()}`, capacityMl: 25, class: 'B', notes: 'spare' } }),
      (c) => ({ body: { identifier: `BU-${c.uniq()}`, capacityMl: 100, class: 'B', toleranceMl: 0.2 } }),
    ],
  },
  'PATCH /labs/:labId/burettes/:buretteId': { valid: [() => ({ body: { notes: 'checked' } }), () => ({ body: { notes: 'in use', retired: false } })] },
  'POST /labs/:labId/burettes/:buretteId/drip-settings': { valid: [(c) => ({ body: { stopcockSetting: `½ turn ${c.uniq()}`, tip: 'standard', notes: 'fuzz' } })] },
  'PATCH /labs/:labId/drip-settings/:settingId': { valid: [() => ({ body: { tip: 'fine' } }), () => ({ body: { stopcockSetting: '¼ turn', notes: 'n', retired: false } })] },
  'POST /labs/:labId/drip-settings/:settingId/calibrations': {
    valid: [
      () => ({ body: { method: 'gravimetric', inputs: { deliveries: DELIVERIES }, notes: 'fuzz' } }),
      () => ({ body: { method: 'mark-timing', inputs: { points: MARK_POINTS } } }),
      () => ({ body: { method: 'drop-count', inputs: { tapTimesS: DROP_TAPS } } }),
      (c) => ({ body: { method: 'drop-count', inputs: { drops: 20, intervalS: 50 }, referenceCalibrationId: c.a.dripCalibrations.gravimetric } }),
    ],
  },
  'PATCH /labs/:labId/drip-calibrations/:calibrationId': { valid: [() => ({ body: { notes: 'rechecked' } }), (c) => ({ body: { expiresAt: later(c, 20) } })] },
  'POST /labs/:labId/electrodes': { valid: [(c) => ({ body: { identifier: `GE-${c.uniq()}`, description: 'combination glass electrode' } })] },
  'PATCH /labs/:labId/electrodes/:electrodeId': { valid: [() => ({ body: { description: 'cleaned' } }), () => ({ body: { retired: false } })] },
  'POST /labs/:labId/electrodes/:electrodeId/calibrations': {
    valid: [
      () => ({ body: { temperatureC: 25, points: ELECTRODE_POINTS } }),
      () => ({ body: { temperatureC: 21, points: [{ pH: 4.0, mV: 171 }, { pH: 7.0, mV: 2 }], notes: 'two-point' } }),
    ],
  },
  'PATCH /labs/:labId/electrode-calibrations/:calibrationId': { valid: [() => ({ body: { notes: 'rechecked' } }), (c) => ({ body: { expiresAt: later(c, 1) } })] },
  'POST /labs/:labId/titrant-lots': {
    valid: [(c) => ({ body: { identifier: `NaOH-${c.uniq()}`, nominalConcentrationM: 0.1, preparedAt: c.fx.now().toISOString(), storage: 'polyethylene, soda-lime guard tube' } })],
  },
  'PATCH /labs/:labId/titrant-lots/:lotId': { valid: [() => ({ body: { storage: 'PE bottle' } }), (c) => ({ body: { notes: 'n', expiresAt: later(c, 30), retired: false } })] },
  'POST /labs/:labId/titrant-lots/:lotId/standardisations': {
    valid: [() => ({ body: QUAM_A2 }), (c) => ({ body: { massG: 0.4012, equivalenceVolumeMl: 19.24, runId: c.a.runId, notes: 'replicate' } })],
  },
  'PATCH /labs/:labId/standardisations/:standardisationId': { valid: [() => ({ body: { notes: 'rechecked' } }), (c) => ({ body: { expiresAt: later(c, 10) } })] },

  'GET /labs/:labId/runs': {
    valid: [
      () => ({ query: { page: '1', pageSize: '10', sort: 'sample', dir: 'asc' } }),
      (c) => ({ query: { q: 'acid', status: 'submitted', analystId: c.fx.people.manager.id, from: '2020-01-01', to: '2100-01-01', titrantLot: 'NaOH-IMP-1', sort: 've' } }),
      () => ({ query: { sample: 'khp', sort: 'pka', dir: 'desc', page: '2', pageSize: '5' } }),
    ],
  },
  'GET /runs/:runId': { valid: [() => ({})] },
  // On the review run: the export routes after this one read every comment of their run (and its audit entry).
  'POST /runs/:runId/comments': { valid: [() => ({ body: { body: 'fuzz: the second break looks early' } })], ids: { runId: (_c, lab) => lab.reviewRunId } },
  'POST /runs/:runId/submit': { valid: [() => ({ body: { note: 'please check the break' } }), () => ({ body: {} })], ids: { runId: (_c, lab) => lab.reviewRunId }, prepare: (c) => bringReviewRun(c, 'open') },
  'POST /runs/:runId/return': { valid: [() => ({ body: { comment: 'Add the second checkpoint.' } })], ids: { runId: (_c, lab) => lab.reviewRunId }, prepare: (c) => bringReviewRun(c, 'submitted') },
  'POST /runs/:runId/approve': { valid: [() => ({ body: { password: TEST_PASSWORD, comment: 'Fine.' } })], ids: { runId: (_c, lab) => lab.reviewRunId }, prepare: (c) => bringReviewRun(c, 'submitted') },
  'POST /runs/:runId/revisions': { valid: [() => ({ body: { reason: 'Corrected sample mass from the balance printout.' } })], ids: { runId: (_c, lab) => lab.reviewRunId }, prepare: (c) => bringReviewRun(c, 'approved') },
  'GET /runs/:runId/export/readings.csv': { valid: [() => ({})] },
  'GET /runs/:runId/export/results.csv': { valid: [() => ({})] },
  'GET /runs/:runId/export/report.pdf': { valid: [() => ({})] },
  'POST /labs/:labId/imports/preview': {
    valid: [
      () => ({ body: { csv: csv(12) } }),
      () => ({ body: { csv: csv(12), mapping: { time: 'time_s', pH: 'pH' } } }),
      () => ({ body: { csv: 'Volume (mL);pH;mV\n0,0;3,10;220\n1,5;3,60;190\n3,0;4,00;170', mapping: { volume: 'Volume (mL)', pH: 'pH', mV: 'mV' }, rateMlPerS: 0.05 } }),
      () => ({ body: { csv: 't,pH\n0:00,3\n1:30.5,4\n1:02:03,5', mapping: { time: 't', pH: 'pH' } } }),
    ],
  },
  'POST /labs/:labId/imports': {
    valid: [
      () => ({ body: { csv: csv(12), mapping: { time: 'time_s', pH: 'pH' }, setup: IMPORT_SETUP } }),
      () => ({
        body: {
          csv: 'Volume (mL);pH;mV\n0,0;3,10;220\n1,5;3,60;190\n3,0;4,00;170',
          mapping: { volume: 'Volume (mL)', pH: 'pH', mV: 'mV' },
          setup: { sampleName: 'fuzz volume import', sampleVolumeMl: 25, titrantConcentrationM: 0.1, rateMlPerS: 0.05, acidProtons: 2, temperatureC: 22, notes: 'typed' },
        },
      }),
    ],
  },
  'POST /runs/:runId/attachments': { valid: [() => ({})], upload: true },
  'POST /labs/:labId/calibrations/:calibrationId/attachments': { valid: [() => ({})], upload: true },
  'GET /labs/:labId/calibrations/:calibrationId/attachments': { valid: [() => ({})] },
  'GET /attachments/:attachmentId': { valid: [() => ({})] },
  'POST /sync/push': { valid: [(c) => ({ body: pushChanges(c) }), (c) => ({ body: pushBlock(c) })] },
  'GET /sync/pull': { valid: [() => ({ query: { cursor: '0', limit: '50' } }), () => ({ query: { cursor: '100', limit: '200' } })] },
  'GET /runs/:runId/live': { valid: [() => ({ query: { after: '0' } }), () => ({})] },
  'GET /dev/mailbox': { valid: [() => ({})] },
};
