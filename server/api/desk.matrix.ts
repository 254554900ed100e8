// Route-matrix expectations of the desk routes (spread into the matrix of server/http/route-matrix.test.ts).
// Test support only: every cell builds a valid request against fresh records of the target lab.
import { randomUUID } from 'node:crypto';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { readings, runs } from '../../db/schema';
import { attachments, runRevisions } from '../../db/schema/desk';
import { TEST_PASSWORD, type AuthFixture } from '../auth/test-fixture';
import { standardisation } from './calibrations.matrix';
import { LocalDiskStore, storageFor, useStorage } from '../storage';

type Row = { signedOut: number; analyst: number; manager: number; viewer: number };
type Req = { params?: Record<string, string>; body?: unknown };
type Entry = { request: (fx: AuthFixture, lab: { id: string }) => Promise<Req> | Req; own: Row; other: Row };

const OTHER: Row = { signedOut: 401, analyst: 404, manager: 404, viewer: 404 };
const READ: Row = { signedOut: 401, analyst: 200, manager: 200, viewer: 200 };
const MANAGER: Row = { signedOut: 401, analyst: 403, manager: 200, viewer: 403 };
const WORKER: Row = { signedOut: 401, analyst: 200, manager: 200, viewer: 403 };
/** Upload routes: the matrix sends JSON, so a caller who passes the access check gets 400 "no file" (uploads
 * themselves are tested in desk.test.ts). */
const UPLOAD: Row = { signedOut: 401, analyst: 400, manager: 400, viewer: 403 };

async function freshRun(fx: AuthFixture, labId: string, status = 'finished') {
  const id = randomUUID();
  const analyst = (await fx.person(labId, 'analyst')).id;
  await fx.database.db.insert(runs).values({
    id,
    labId,
    analystId: analyst,
    sampleName: `matrix ${id.slice(0, 6)}`,
    status,
    setup: { sample: { volumeMl: 50 }, titrant: { source: 'manual', concentrationM: 0.1 }, delivery: { source: 'manual', rateMlPerS: 0.05, startBuretteMl: 0 } },
  });
  await fx.database.db.insert(readings).values([0, 10, 20].map((t) => ({ id: randomUUID(), runId: id, labId, timeS: t, pH: 3 + t / 10 })));
  return id;
}

let storeReady = false;
function testStore(fx: AuthFixture) {
  if (!storeReady) useStorage(fx.database, new LocalDiskStore(mkdtempSync(path.join(tmpdir(), 'hm-matrix-'))));
  storeReady = true;
  return storageFor(fx.database);
}

const runParam = async (fx: AuthFixture, lab: { id: string }, status?: string) => ({ params: { runId: await freshRun(fx, lab.id, status) } });

export const deskMatrix: Record<string, Entry> = {
  'GET /labs/:labId/runs': { request: (_fx, lab) => ({ params: { labId: lab.id } }), own: READ, other: OTHER },
  'GET /runs/:runId': { request: (fx, lab) => runParam(fx, lab), own: READ, other: OTHER },
  'POST /runs/:runId/comments': {
    request: async (fx, lab) => ({ ...(await runParam(fx, lab)), body: { body: 'matrix comment' } }),
    own: { ...READ, analyst: 201, manager: 201, viewer: 201 },
    other: OTHER,
  },
  'POST /runs/:runId/submit': { request: async (fx, lab) => ({ ...(await runParam(fx, lab)), body: {} }), own: WORKER, other: OTHER },
  'POST /runs/:runId/return': {
    request: async (fx, lab) => ({ ...(await runParam(fx, lab, 'submitted')), body: { comment: 'matrix: please redo' } }),
    own: MANAGER,
    other: OTHER,
  },
  'POST /runs/:runId/approve': {
    request: async (fx, lab) => ({ ...(await runParam(fx, lab, 'submitted')), body: { password: TEST_PASSWORD } }),
    own: MANAGER,
    other: OTHER,
  },
  'POST /runs/:runId/revisions': {
    request: async (fx, lab) => {
      const runId = await freshRun(fx, lab.id, 'approved');
      await fx.database.db.insert(runRevisions).values({ runId, labId: lab.id, revision: 1, lockedAt: new Date(), approvalMeaning: 'matrix' });
      return { params: { runId }, body: { reason: 'matrix: new revision' } };
    },
    own: { ...WORKER, analyst: 201, manager: 201 },
    other: OTHER,
  },
  'GET /runs/:runId/export/readings.csv': { request: (fx, lab) => runParam(fx, lab), own: READ, other: OTHER },
  'GET /runs/:runId/export/results.csv': { request: (fx, lab) => runParam(fx, lab), own: READ, other: OTHER },
  'GET /runs/:runId/export/report.pdf': { request: (fx, lab) => runParam(fx, lab), own: READ, other: OTHER },
  'POST /labs/:labId/imports/preview': {
    request: (_fx, lab) => ({ params: { labId: lab.id }, body: { csv: 'time,pH\n0,3\n10,4' } }),
    own: WORKER,
    other: OTHER,
  },
  'POST /labs/:labId/imports': {
    request: (_fx, lab) => ({
      params: { labId: lab.id },
      body: {
        csv: 'time,pH\n0,3\n10,4',
        mapping: { time: 'time', pH: 'pH' },
        setup: { sampleName: 'matrix import', sampleVolumeMl: 50, titrantConcentrationM: 0.1, rateMlPerS: 0.05 },
      },
    }),
    own: { ...WORKER, analyst: 201, manager: 201 },
    other: OTHER,
  },
  'POST /runs/:runId/attachments': { request: (fx, lab) => runParam(fx, lab), own: UPLOAD, other: OTHER },
  'POST /labs/:labId/calibrations/:calibrationId/attachments': {
    request: async (fx, lab) => ({ params: { labId: lab.id, calibrationId: (await standardisation(fx, lab.id)).id } }),
    own: UPLOAD,
    other: OTHER,
  },
  'GET /labs/:labId/calibrations/:calibrationId/attachments': {
    request: async (fx, lab) => ({ params: { labId: lab.id, calibrationId: (await standardisation(fx, lab.id)).id } }),
    own: READ,
    other: OTHER,
  },
  'GET /attachments/:attachmentId': {
    request: async (fx, lab) => {
      const store = testStore(fx);
      const key = `${lab.id}/${randomUUID()}.pdf`;
      await store.put(key, Buffer.from('%PDF-1.4\n%%EOF\n'), 'application/pdf');
      const [row] = await fx.database.db
        .insert(attachments)
        .values({ labId: lab.id, storageKey: key, originalName: 'm.pdf', mimeType: 'application/pdf', sizeBytes: 15, sha256: 'x', uploadedBy: fx.people.manager.id })
        .returning();
      return { params: { attachmentId: row.id } };
    },
    own: READ,
    other: OTHER,
  },
};
