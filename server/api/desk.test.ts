import { and, count, eq, sql } from 'drizzle-orm';
import Papa from 'papaparse';
import type { Response } from 'superagent';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog, outbox, readings, runs, syncChanges, users } from '../../db/schema';
import { serverContextOf } from '../app';
import { v7 } from 'uuid';
import { authFixture, TEST_PASSWORD, type AuthFixture } from '../auth/test-fixture';
import QUAM_A2 from '../../shared/engine/fixtures/standardize-quam-a2.json';
import { demoRun, insertDemoRun, DEMO_SAMPLES } from '../demo/runs';
import { startFakeS3 } from '../storage/fake-s3-server';
import { S3Store } from '../storage/s3';
import { LocalDiskStore, useStorage } from '../storage';
import { closeTemplate } from '../testing/db';
import { eventually, sleep } from '../testing/eventually';
import { pdfPageText } from '../testing/pdf-text';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

let fx: AuthFixture;
const tokens: Record<string, string> = {};
const runIdsA: string[] = [];
let runB: string;
const day = 86_400_000;
const base = Date.UTC(2026, 2, 1, 9, 0, 0);

const as = (who: 'manager' | 'analyst' | 'viewer' | 'managerB') => `Bearer ${tokens[who]}`;
/** A supertest parser that keeps a binary answer (PDF, image) as one Buffer. */
const bytes = (r: Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  r.on('data', (c: Buffer) => chunks.push(c));
  r.on('end', () => cb(null, Buffer.concat(chunks)));
};

beforeAll(async () => {
  fx = await authFixture();
  for (const who of ['manager', 'analyst', 'viewer', 'managerB'] as const) tokens[who] = (await fx.session(fx.people[who].id)).accessToken;
  // 12 runs in lab A over 12 days, by the analyst (even days) and the manager (odd days); statuses vary.
  const statuses = ['finished', 'submitted', 'finished', 'recording'];
  for (let i = 0; i < 12; i++) {
    const r = demoRun({
      labId: fx.labA.id,
      analystId: i % 2 === 0 ? fx.people.analyst.id : fx.people.manager.id,
      index: i,
      createdAt: new Date(base + i * day),
      status: statuses[i % 4],
      analyse: i < 3, // analysis is costly; a few stored results are enough for the Ve/pKa columns
    });
    await insertDemoRun(fx.database.db, r);
    runIdsA.push(r.run.id);
  }
  const b = demoRun({ labId: fx.labB.id, analystId: fx.people.managerB.id, index: 100, createdAt: new Date(base), analyse: false });
  await insertDemoRun(fx.database.db, b);
  runB = b.run.id;
}, 120_000);

afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

const list = (query: Record<string, string | number>, who: 'viewer' | 'manager' = 'viewer') =>
  fx.api().get(`/api/labs/${fx.labA.id}/runs`).query(query).set('authorization', as(who));

describe('runs list: paging, sorting, filters', () => {
  it('pages on the server: every run exactly once across pages, total right', async () => {
    const seen: string[] = [];
    for (let page = 1; page <= 3; page++) {
      const res = await list({ page, pageSize: 5 });
      expect(res.status).toBe(200);
      expect(res.body.total).toBe(12);
      expect(res.body.rows.length).toBe(page < 3 ? 5 : 2);
      seen.push(...res.body.rows.map((r: { id: string }) => r.id));
    }
    expect(new Set(seen).size).toBe(12);
    expect([...seen].sort()).toEqual([...runIdsA].sort());
    // Default: newest first.
    expect(seen[0]).toBe(runIdsA[11]);
    const past = await list({ page: 9, pageSize: 5 });
    expect(past.body.rows).toEqual([]);
    expect(past.body.total).toBe(12);
  });

  it('sorts by sample name both ways and by Ve with runs without a result last', async () => {
    const asc = (await list({ sort: 'sample', dir: 'asc', pageSize: 50 })).body.rows.map((r: { sampleName: string }) => r.sampleName);
    expect(asc).toEqual([...asc].sort((a: string, b: string) => a.toLowerCase().localeCompare(b.toLowerCase())));
    const desc = (await list({ sort: 'sample', dir: 'desc', pageSize: 50 })).body.rows.map((r: { sampleName: string }) => r.sampleName);
    expect(desc).toEqual([...asc].reverse().sort((a: string, b: string) => b.toLowerCase().localeCompare(a.toLowerCase())));
    const byVe = (await list({ sort: 've', dir: 'asc', pageSize: 50 })).body.rows.map((r: { equivalenceVolumeMl: number | null }) => r.equivalenceVolumeMl);
    const withVe = byVe.filter((v: number | null) => v !== null);
    expect(withVe.length).toBe(3);
    expect(withVe).toEqual([...withVe].sort((a: number, b: number) => a - b));
    expect(byVe.slice(0, 3)).toEqual(withVe); // nulls last
  });

  it('filters by analyst, status, sample, date range, titrant lot and free text', async () => {
    const byAnalyst = await list({ analystId: fx.people.analyst.id, pageSize: 50 });
    expect(byAnalyst.body.total).toBe(6);
    expect(byAnalyst.body.rows.every((r: { analystId: string }) => r.analystId === fx.people.analyst.id)).toBe(true);

    const submitted = await list({ status: 'submitted', pageSize: 50 });
    expect(submitted.body.total).toBe(3);
    expect(submitted.body.rows.every((r: { status: string }) => r.status === 'submitted')).toBe(true);

    const kphCount = runIdsA.filter((_id, i) => DEMO_SAMPLES[i % DEMO_SAMPLES.length].name.includes('KHP')).length;
    const khp = await list({ sample: 'khp', pageSize: 50 });
    expect(khp.body.total).toBe(kphCount);

    // Days 2..4 inclusive (runs 2, 3, 4).
    const from = new Date(base + 2 * day).toISOString().slice(0, 10);
    const to = new Date(base + 4 * day).toISOString().slice(0, 10);
    const ranged = await list({ from, to, pageSize: 50 });
    expect(ranged.body.rows.map((r: { id: string }) => r.id).sort()).toEqual([runIdsA[2], runIdsA[3], runIdsA[4]].sort());

    const lotB = runIdsA.filter((_id, i) => DEMO_SAMPLES[i % DEMO_SAMPLES.length].lot === 'NaOH-DEMO-B').length;
    const lot = await list({ titrantLot: 'NaOH-DEMO-B', pageSize: 50 });
    expect(lot.body.total).toBe(lotB);
    expect(lot.body.facets.titrantLots).toEqual(['NaOH-DEMO-A', 'NaOH-DEMO-B']);

    const search = await list({ q: fx.people.manager.displayName, pageSize: 50 });
    expect(search.body.total).toBe(6);
    // LIKE wildcards typed by a user are literal.
    expect((await list({ q: '%' })).body.total).toBe(0);
  });

  it('never shows another lab’s runs, and refuses bad filters with a clear error', async () => {
    const all = await list({ pageSize: 200 });
    expect(all.body.rows.map((r: { id: string }) => r.id)).not.toContain(runB);
    const bad = await list({ status: 'nonsense' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('invalid_input');
    const other = await fx.api().get(`/api/runs/${runB}`).set('authorization', as('viewer'));
    expect(other.status).toBe(404);
  });
});

describe('run detail', () => {
  it('gives readings with corrections marked, volumes, the analysis and calibrations', async () => {
    const runId = runIdsA[0];
    const [first] = await fx.database.db.select().from(readings).where(eq(readings.runId, runId)).limit(1);
    const corrId = crypto.randomUUID();
    await fx.database.db.insert(readings).values({ id: corrId, runId, labId: fx.labA.id, kind: 'correction', timeS: first.timeS, pH: (first.pH ?? 0) + 0.05, replacesId: first.id, reason: 'typed 3.12 for 3.17' });
    const res = await fx.api().get(`/api/runs/${runId}`).set('authorization', as('viewer'));
    expect(res.status).toBe(200);
    const orig = res.body.readings.find((r: { id: string }) => r.id === first.id);
    expect(orig.supersededBy).toBe(corrId);
    const corr = res.body.readings.find((r: { id: string }) => r.id === corrId);
    expect(corr.reason).toBe('typed 3.12 for 3.17');
    expect(res.body.analysis.equivalencePoints.length).toBe(1);
    expect(res.body.readings.every((r: { volumeMl: number | null }) => typeof r.volumeMl === 'number')).toBe(true);
    expect(res.body.calibrations.map((c: { kind: string }) => c.kind)).toEqual(['titrant', 'drip-rate', 'electrode']);
    expect(res.body.can).toMatchObject({ review: false, attach: false });
    expect(res.body.history.some((h: { action: string }) => h.action === 'reading.correct')).toBe(true);
  });

  it('lets a viewer comment; the thread comes back in order', async () => {
    const runId = runIdsA[1];
    for (const body of ['first look', 'second thought']) {
      const r = await fx.api().post(`/api/runs/${runId}/comments`).set('authorization', as('viewer')).send({ body });
      expect(r.status).toBe(201);
    }
    const empty = await fx.api().post(`/api/runs/${runId}/comments`).set('authorization', as('viewer')).send({ body: '  ' });
    expect(empty.status).toBe(400);
    const d = await fx.api().get(`/api/runs/${runId}`).set('authorization', as('viewer'));
    expect(d.body.comments.map((c: { body: string }) => c.body)).toEqual(['first look', 'second thought']);
  });
});

describe('review: submit, return, approve with the password', () => {
  it('a viewer cannot approve or submit', async () => {
    const runId = runIdsA[1]; // submitted
    const r = await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('viewer')).send({ password: TEST_PASSWORD });
    expect(r.status).toBe(403);
    const s = await fx.api().post(`/api/runs/${runId}/submit`).set('authorization', as('viewer')).send({});
    expect(s.status).toBe(403);
    const [row] = await fx.database.db.select().from(runs).where(eq(runs.id, runId));
    expect(row.status).toBe('submitted');
  });

  it('submission mails the managers; return mails the analyst with the comment', async () => {
    const runId = runIdsA[2]; // finished, by the analyst
    const s = await fx.api().post(`/api/runs/${runId}/submit`).set('authorization', as('analyst')).send({ note: 'please check the break' });
    expect(s.status).toBe(200);
    expect(s.body.status).toBe('submitted');
    const toManager = await fx.database.db.select().from(outbox).where(eq(outbox.toAddress, fx.people.manager.email));
    expect(toManager.some((m) => m.subject.includes('submitted') && m.textBody.includes(runId))).toBe(true);
    const again = await fx.api().post(`/api/runs/${runId}/submit`).set('authorization', as('analyst')).send({});
    expect(again.status).toBe(409);
    const ret = await fx.api().post(`/api/runs/${runId}/return`).set('authorization', as('manager')).send({ comment: 'Add the second checkpoint.' });
    expect(ret.status).toBe(200);
    expect(ret.body.status).toBe('returned');
    const toAnalyst = await fx.database.db.select().from(outbox).where(eq(outbox.toAddress, fx.people.analyst.email));
    expect(toAnalyst.some((m) => m.subject.includes('returned') && m.textBody.includes('Add the second checkpoint.'))).toBe(true);
  });

  it('approval needs the right password, is audited with time and meaning, locks the run; a new revision unlocks', async () => {
    const runId = runIdsA[5]; // submitted
    const wrong = await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('manager')).send({ password: 'not my password' });
    expect(wrong.status).toBe(401);
    expect(wrong.body.error.code).toBe('reauth_failed');
    expect((await fx.database.db.select().from(runs).where(eq(runs.id, runId)))[0].status).toBe('submitted');
    const missing = await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('manager')).send({});
    expect(missing.status).toBe(400);

    const before = Date.now();
    const ok = await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('manager')).send({ password: TEST_PASSWORD, comment: 'Fine.' });
    expect(ok.status).toBe(200);
    expect(ok.body.status).toBe('approved');
    const entries = await fx.database.db.select().from(auditLog).where(and(eq(auditLog.entityId, runId), eq(auditLog.action, 'run.approve')));
    expect(entries.length).toBe(1);
    expect(entries[0].actorId).toBe(fx.people.manager.id);
    expect(entries[0].at.getTime()).toBeGreaterThanOrEqual(before - 1000);
    expect((entries[0].after as { meaning: string }).meaning).toMatch(/accepted as the lab’s result/);
    expect((entries[0].after as { reauthenticated: boolean }).reauthenticated).toBe(true);
    const refused = await fx.database.db.select().from(auditLog).where(and(eq(auditLog.entityId, runId), eq(auditLog.action, 'run.approve.refused')));
    expect(refused.length).toBe(1);
    const mail = await fx.database.db.select().from(outbox).where(eq(outbox.toAddress, fx.people.manager.email));
    expect(mail.length).toBeGreaterThan(0);

    const d = await fx.api().get(`/api/runs/${runId}`).set('authorization', as('viewer'));
    expect(d.body.revision.lockedAt).not.toBeNull();
    expect(d.body.revision.approvalMeaning).toMatch(/accepted/);
    // Locked: cannot be approved, returned or submitted again.
    expect((await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('manager')).send({ password: TEST_PASSWORD })).status).toBe(409);
    expect((await fx.api().post(`/api/runs/${runId}/submit`).set('authorization', as('manager')).send({})).status).toBe(409);
    const reopen = await fx.api().post(`/api/runs/${runId}/revisions`).set('authorization', as('manager')).send({ reason: 'Corrected sample mass from the balance printout.' });
    expect(reopen.status).toBe(201);
    expect(reopen.body.revision).toBe(2);
    const d2 = await fx.api().get(`/api/runs/${runId}`).set('authorization', as('viewer'));
    expect(d2.body.revision).toMatchObject({ revision: 2, lockedAt: null });
    expect(d2.body.run.status).toBe('finished');
  });
});

describe('sync hand-off', () => {
  const push = (who: 'manager' | 'analyst', changes: unknown[]) =>
    fx.api().post('/api/sync/push').set('authorization', as(who)).send({ deviceId: v7(), sentAt: Date.now(), changes });

  it('refuses changes to an approved (locked) run with a reason; the review status goes to the change log', async () => {
    const runId = runIdsA[9]; // submitted, by the manager
    const ok = await fx.api().post(`/api/runs/${runId}/approve`).set('authorization', as('manager')).send({ password: TEST_PASSWORD });
    expect(ok.status).toBe(200);
    const logged = await fx.database.db.select().from(syncChanges).where(and(eq(syncChanges.recordId, runId), eq(syncChanges.entity, 'run')));
    expect(logged.length).toBeGreaterThanOrEqual(1);
    const before = (await fx.database.db.select({ n: count() }).from(readings).where(eq(readings.runId, runId)))[0].n;
    const res = await push('manager', [
      { id: v7(), kind: 'reading', seq: 1, recordedAt: Date.now(), payload: { runId, timeS: 9999, pH: 7 } },
      { id: v7(), kind: 'run_meta_edit', seq: 2, recordedAt: Date.now(), payload: { runId, field: 'notes', value: 'changed after approval', baseVersion: 1 } },
    ]);
    expect(res.status).toBe(200);
    for (const r of res.body.results) {
      expect(r.outcome).toBe('rejected');
      expect(r.reason).toMatch(/approved and locked/);
    }
    expect((await fx.database.db.select({ n: count() }).from(readings).where(eq(readings.runId, runId)))[0].n).toBe(before);
    expect((await fx.database.db.select().from(runs).where(eq(runs.id, runId)))[0].notes).not.toBe('changed after approval');
  });

  it('a submission through sync e-mails the managers like the API submission', async () => {
    const runId = runIdsA[2]; // finished, by the analyst
    const sample = (await fx.database.db.select().from(runs).where(eq(runs.id, runId)))[0].sampleName;
    const subject = `Run submitted for review: ${sample}`;
    const mailsBefore = (await fx.database.db.select().from(outbox).where(and(eq(outbox.toAddress, fx.people.manager.email), eq(outbox.subject, subject)))).length;
    const res = await push('analyst', [{ id: v7(), kind: 'submission', seq: 1, recordedAt: Date.now(), payload: { runId, note: 'From the phone.' } }]);
    expect(res.body.results[0].outcome).toBe('accepted');
    const mails = await fx.database.db.select().from(outbox).where(and(eq(outbox.toAddress, fx.people.manager.email), eq(outbox.subject, subject)));
    expect(mails.length).toBe(mailsBefore + 1);
    expect(mails.at(-1)!.textBody).toMatch(/From the phone\./);
  });
});

describe('exports', () => {
  it('readings CSV parses back: numbers as numbers, the same values', async () => {
    const runId = runIdsA[3];
    const res = await fx.api().get(`/api/runs/${runId}/export/readings.csv`).set('authorization', as('viewer')).buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename=".+\.readings\.csv"$/);
    const parsed = Papa.parse<Record<string, unknown>>(res.text, { header: true, dynamicTyping: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    const stored = await fx.database.db.select().from(readings).where(eq(readings.runId, runId));
    expect(parsed.data.length).toBe(stored.length);
    for (const row of parsed.data) {
      const s = stored.find((r) => r.id === row.reading_id)!;
      expect(typeof row.time_s).toBe('number');
      expect(row.time_s).toBe(s.timeS);
      expect(row.pH).toBe(s.pH);
    }
    // Raw text: a number cell is not quoted.
    expect(res.text.split('\r\n')[1]).toMatch(/,reading,\d+(\.\d+)?,/);
  });

  it('neutralises formula text cells (OWASP CSV injection) while negative numbers stay numbers', async () => {
    const runId = runIdsA[4];
    await fx.database.db.update(runs).set({ sampleName: '=HYPERLINK("http://x.test","click")' }).where(eq(runs.id, runId));
    const [first] = await fx.database.db.select().from(readings).where(eq(readings.runId, runId)).limit(1);
    await fx.database.db.insert(readings).values({ id: crypto.randomUUID(), runId, labId: fx.labA.id, kind: 'correction', timeS: first.timeS, pH: 3, mV: -12.5, replacesId: first.id, reason: '+cmd|/C calc' });
    const res = await fx.api().get(`/api/runs/${runId}/export/readings.csv`).set('authorization', as('viewer')).buffer(true);
    const parsed = Papa.parse<Record<string, unknown>>(res.text, { header: true, dynamicTyping: true, skipEmptyLines: true });
    for (const row of parsed.data) expect(row.sample).toBe(`'=HYPERLINK("http://x.test","click")`);
    const corr = parsed.data.find((r) => r.reason !== null && r.reason !== '')!;
    expect(corr.reason).toBe(`'+cmd|/C calc`);
    expect(corr.mV).toBe(-12.5);
    for (const row of parsed.data) for (const v of Object.values(row)) if (typeof v === 'string') expect(v).not.toMatch(/^[=+\-@\t\r]/);
    const results = await fx.api().get(`/api/runs/${runId}/export/results.csv`).set('authorization', as('viewer')).buffer(true);
    expect(results.status).toBe(200);
    expect(results.text).toContain(`"'=HYPERLINK`);
  });

  it('makes a PDF report', async () => {
    const res = await fx.api().get(`/api/runs/${runIdsA[0]}/export/report.pdf`).set('authorization', as('viewer')).buffer(true).parse(bytes);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const body = res.body as Buffer;
    expect(body.subarray(0, 5).toString()).toBe('%PDF-');
    // What the page shows: the run's sample name and its Ve, as the run's detail gives them.
    const detail = await fx.api().get(`/api/runs/${runIdsA[0]}`).set('authorization', as('viewer'));
    expect(detail.status).toBe(200);
    const sampleName: string = detail.body.run.sampleName;
    const ve: number = detail.body.analysis.equivalencePoints[0].volumeMl;
    const text = pdfPageText(body);
    expect(text).toContain(`Run report: ${sampleName}`);
    const shown = /^Equivalence volume \(step 1\): (\d+(?:\.\d+)?) ± \S+ mL/m.exec(text);
    expect(shown, text.slice(0, 2000)).not.toBeNull();
    // The report gives 5 significant digits: within half a unit of the fifth digit of the result's Ve.
    expect(Math.abs(Number(shown![1]) - ve)).toBeLessThanOrEqual(0.5 * 10 ** (Math.floor(Math.log10(ve)) - 4) * (1 + 1e-9));
    expect(text).not.toContain('\uFFFD');
  });

  it('prints a sample name outside WinAnsi as typed (the report embeds its font)', async () => {
    // Czech and Greek letters, which the PDF standard fonts cannot show (a demo name, invented).
    const name = 'Kyselina benzoová, vzorek č. 7 — δείγμα (demo)';
    const [src] = await fx.database.db.select().from(runs).where(eq(runs.id, runIdsA[1]));
    await fx.database.db.update(runs).set({ sampleName: name }).where(eq(runs.id, runIdsA[1]));
    try {
      const res = await fx.api().get(`/api/runs/${runIdsA[1]}/export/report.pdf`).set('authorization', as('viewer')).buffer(true).parse(bytes);
      expect(res.status).toBe(200);
      // The title wraps at 18 pt; pdfkit keeps the space at the end of the first line.
      expect(pdfPageText(res.body as Buffer).replace(/\n/g, '')).toContain(`Run report: ${name}`);
    } finally {
      await fx.database.db.update(runs).set({ sampleName: src.sampleName }).where(eq(runs.id, runIdsA[1]));
    }
  });
});

describe('import', () => {
  const setup = { sampleName: 'Imported benzoic acid', sampleVolumeMl: 50, sampleMassG: 0.2442, titrantConcentrationM: 0.1, rateMlPerS: 0.05, titrantLot: 'NaOH-IMP-1' };
  const good = ['time_s,pH,note', ...Array.from({ length: 30 }, (_v, i) => `${i * 10},${(3 + i * 0.1).toFixed(2)},ok`)].join('\n');

  it('previews columns, a suggested mapping and row errors', async () => {
    const res = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv: good });
    expect(res.status).toBe(200);
    expect(res.body.columns).toEqual(['time_s', 'pH', 'note']);
    expect(res.body.suggested).toMatchObject({ time: 'time_s', pH: 'pH' });
    expect(res.body.rowCount).toBe(30);
    const bad = good.replace('50,3.50', '50,3.5x');
    const p2 = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv: bad, mapping: { time: 'time_s', pH: 'pH' } });
    expect(p2.body.errors).toEqual([{ line: 7, column: 'pH', message: 'pH "3.5x" is not a number.' }]);
  });

  it('imports a good file as a run; a file with one bad row imports nothing', async () => {
    const runsBefore = (await fx.database.db.select({ n: count() }).from(runs))[0].n;
    const readingsBefore = (await fx.database.db.select({ n: count() }).from(readings))[0].n;
    const bad = good.replace('200,5.00', '200,99');
    const refused = await fx.api().post(`/api/labs/${fx.labA.id}/imports`).set('authorization', as('analyst')).send({ csv: bad, mapping: { time: 'time_s', pH: 'pH' }, setup });
    expect(refused.status).toBe(422);
    expect(refused.body.error.details.errors).toEqual([{ line: 22, column: 'pH', message: 'pH 99 is outside -2…16.' }]);
    expect((await fx.database.db.select({ n: count() }).from(runs))[0].n).toBe(runsBefore);
    expect((await fx.database.db.select({ n: count() }).from(readings))[0].n).toBe(readingsBefore);

    const viewer = await fx.api().post(`/api/labs/${fx.labA.id}/imports`).set('authorization', as('viewer')).send({ csv: good, mapping: { time: 'time_s', pH: 'pH' }, setup });
    expect(viewer.status).toBe(403);

    const ok = await fx.api().post(`/api/labs/${fx.labA.id}/imports`).set('authorization', as('analyst')).send({ csv: good, mapping: { time: 'time_s', pH: 'pH' }, setup });
    expect(ok.status).toBe(201);
    expect(ok.body.readings).toBe(30);
    const d = await fx.api().get(`/api/runs/${ok.body.runId}`).set('authorization', as('viewer'));
    expect(d.body.run).toMatchObject({ sampleName: 'Imported benzoic acid', status: 'finished', titrantLot: 'NaOH-IMP-1', readingCount: 30 });
    expect(d.body.readings[3]).toMatchObject({ timeS: 30, pH: 3.3 });
    // Phones pull imported runs: the run is in sync's change log, each reading carries its place after the run's.
    const logged = await fx.database.db.select().from(syncChanges).where(eq(syncChanges.runId, ok.body.runId));
    expect(logged.filter((c) => c.entity === 'run').length).toBe(1);
    const placed = await fx.database.db.select({ seq: readings.seq }).from(readings).where(eq(readings.runId, ok.body.runId));
    expect(placed.length).toBe(30);
    for (const r of placed) expect(r.seq).toBeGreaterThan(logged.find((c) => c.entity === 'run')!.seq);
    const pulled = await fx.api().get('/api/sync/pull').query({ cursor: Math.min(...logged.map((c) => c.seq)) - 1, limit: 5000 }).set('authorization', as('viewer'));
    const mine = pulled.body.changes.filter((c: { entity: string; record: { runId?: string; id: string } }) => (c.record.runId ?? c.record.id) === ok.body.runId);
    expect(mine.map((c: { entity: string }) => c.entity)).toEqual(['run', 'checkpoint', ...Array(30).fill('reading')]);
  });

  it('takes a file up to the 5 MB the import allows, and refuses a larger one with that reason', async () => {
    // A wide meter log of about 3 MB within the 20,000-row limit: more than the 2 MB other request bodies may carry.
    const remark = 'logged by the meter; electrode E-2 calibrated this morning; stirrer at setting 3; '.repeat(2);
    const line = (i: number) => `${i},${(3 + (i % 900) / 100).toFixed(2)},${200 - (i % 400)},22.4,${remark}\n`;
    const rows = 18_000;
    const big = 'time_s,pH,mV,temperature_C,remark\n' + Array.from({ length: rows }, (_, i) => line(i)).join('');
    expect(big.length).toBeGreaterThan(2.5e6);
    const p = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv: big });
    expect(p.status, JSON.stringify(p.body).slice(0, 300)).toBe(200);
    expect(p.body.rowCount).toBe(rows);
    const tooBig = (big + big).slice(0, 5_200_000);
    expect(tooBig.length).toBeGreaterThan(5e6);
    const r = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv: tooBig });
    expect(r.status).toBe(400);
    expect(JSON.stringify(r.body)).toContain('larger than 5 MB');
    // Other routes keep the 2 MB limit (a push has 4 MB of its own: server/api/sync.test.ts).
    const other = await fx.api().post(`/api/labs/${fx.labA.id}/burettes`).set('authorization', as('analyst')).send({ junk: 'x'.repeat(2.2e6) });
    expect(other.status).toBe(413);
  });

  it('maps a volume column through the drip rate and reads m:ss times', async () => {
    const csv = 'Volume (mL);pH\n0,0;3,10\n1,5;3,60\n3,0;4,00';
    const p = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv, mapping: { volume: 'Volume (mL)', pH: 'pH' }, rateMlPerS: 0.05 });
    expect(p.body.errors).toEqual([]);
    expect(p.body.parsed.map((r: { timeS: number }) => r.timeS)).toEqual([0, 30, 60]);
    const t = await fx.api().post(`/api/labs/${fx.labA.id}/imports/preview`).set('authorization', as('analyst')).send({ csv: 't,pH\n0:00,3\n1:30.5,4', mapping: { time: 't', pH: 'pH' } });
    expect(t.body.parsed.map((r: { timeS: number }) => r.timeS)).toEqual([0, 90.5]);
  });
});

// The smallest valid files of each kind by their magic bytes (PNG signature + IHDR; %PDF- header).
const PNG = Buffer.from('89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000000000500010d0a2db40000000049454e44ae426082', 'hex');
const PDF = Buffer.from('%PDF-1.4\n1 0 obj<<>>endobj\ntrailer<<>>\n%%EOF\n');

describe.each([
  ['local disk', async () => ({ store: new LocalDiskStore(mkdtempSync(path.join(tmpdir(), 'hm-att-'))), stop: async () => {} })],
  [
    'S3 (fake server)',
    async () => {
      const fake = await startFakeS3({ buckets: ['desk-test'] });
      const store = new S3Store({ bucket: 'desk-test', endpoint: fake.endpoint, region: 'us-east-1', forcePathStyle: true, credentials: fake.credentials });
      return { store, stop: async () => (store.destroy(), fake.stop()) };
    },
  ],
] as const)('attachments on %s storage', (_name, make) => {
  let stop: () => Promise<void>;
  beforeAll(async () => {
    const s = await make();
    useStorage(fx.database, s.store);
    stop = s.stop;
  });
  afterAll(() => stop());

  const upload = (who: 'analyst' | 'viewer', buf: Buffer, name: string, contentType: string, runId = runIdsA[6]) =>
    fx.api().post(`/api/runs/${runId}/attachments`).set('authorization', as(who)).attach('file', buf, { filename: name, contentType });

  it('stores a photo under a server-made name and serves it back as a download', async () => {
    const up = await upload('analyst', PNG, '../../etc/passwd"; x=.png', 'image/png');
    expect(up.status).toBe(201);
    expect(up.body).toMatchObject({ mimeType: 'image/png', sizeBytes: PNG.length, originalName: 'passwd; x=.png' });
    const down = await fx.api().get(`/api/attachments/${up.body.id}`).set('authorization', as('viewer')).buffer(true).parse(bytes);
    expect(down.status).toBe(200);
    expect(Buffer.compare(down.body as Buffer, PNG)).toBe(0);
    expect(down.headers['content-disposition']).toMatch(/^attachment; filename="passwd; x=.png"/);
    expect(down.headers['x-content-type-options']).toBe('nosniff');
    const other = await fx.api().get(`/api/attachments/${up.body.id}`).set('authorization', as('managerB'));
    expect(other.status).toBe(404);
  });

  it('refuses an over-size file, a type it does not take, and content that is not what it claims', async () => {
    const stored = async () => (await fx.api().get(`/api/runs/${runIdsA[6]}`).set('authorization', as('viewer'))).body.attachments.length as number;
    const before = await stored();
    const big = Buffer.concat([PNG, Buffer.alloc(10 * 1024 * 1024 + 1)]);
    const tooBig = await upload('analyst', big, 'big.png', 'image/png');
    expect(tooBig.status).toBe(413);
    const text = await upload('analyst', Buffer.from('<script>alert(1)</script>'), 'photo.png', 'image/png');
    expect(text.status).toBe(415);
    expect(text.body.error.code).toBe('unsupported_type');
    const pdfAsPng = await upload('analyst', PDF, 'photo.png', 'image/png');
    expect(pdfAsPng.status).toBe(415);
    expect(pdfAsPng.body.error.code).toBe('type_mismatch');
    const viewer = await upload('viewer', PNG, 'p.png', 'image/png');
    expect(viewer.status).toBe(403);
    // None of the refused files was stored.
    expect(await stored()).toBe(before);
  });

  it('attaches a certificate to a calibration of the lab only', async () => {
    // A standardisation of lab A and one of lab B, through the API (QUAM A2's KHP figures).
    const standardisation = async (labId: string, who: 'manager' | 'managerB') => {
      const lot = await fx.api().post(`/api/labs/${labId}/titrant-lots`).set('authorization', as(who)).send({ identifier: `NaOH-att-${who}-${crypto.randomUUID().slice(0, 8)}`, nominalConcentrationM: 0.1, preparedAt: fx.now().toISOString() });
      expect(lot.status).toBe(201);
      const std = await fx.api().post(`/api/labs/${labId}/titrant-lots/${lot.body.id}/standardisations`).set('authorization', as(who)).send(QUAM_A2);
      expect(std.status).toBe(201);
      return std.body.id as string;
    };
    const calId = await standardisation(fx.labA.id, 'manager');
    const calB = await standardisation(fx.labB.id, 'managerB');
    const attach = (labId: string, id: string) =>
      fx.api().post(`/api/labs/${labId}/calibrations/${id}/attachments`).set('authorization', as('manager')).attach('file', PDF, { filename: 'KHP certificate.pdf', contentType: 'application/pdf' });
    const up = await attach(fx.labA.id, calId);
    expect(up.status).toBe(201);
    const listed = await fx.api().get(`/api/labs/${fx.labA.id}/calibrations/${calId}/attachments`).set('authorization', as('viewer'));
    expect(listed.body.map((a: { originalName: string }) => a.originalName)).toEqual(['KHP certificate.pdf']);
    // No such calibration, or another lab's under this lab's path: not found, nothing stored.
    expect((await attach(fx.labA.id, crypto.randomUUID())).status).toBe(404);
    expect((await attach(fx.labA.id, calB)).status).toBe(404);
    expect((await fx.api().get(`/api/labs/${fx.labA.id}/calibrations/${calB}/attachments`).set('authorization', as('viewer'))).status).toBe(404);
    const fromB = await fx.api().get(`/api/labs/${fx.labB.id}/calibrations/${calB}/attachments`).set('authorization', as('managerB'));
    expect(fromB.body).toEqual([]);
  });
});

describe('runs list: answers cached per lab, a change shows in the next request', () => {
  type Row = { id: string; sampleName: string; status: string; readingCount: number; analystId: string; analystName: string };
  const listed = async (who: 'viewer' | 'manager' = 'viewer') => (await list({ pageSize: 200 }, who)).body as { rows: Row[]; total: number; facets: { titrantLots: string[] } };
  const rowOf = async (runId: string) => (await listed()).rows.find((r) => r.id === runId);
  const cache = () => serverContextOf(fx.app).labCache;
  const pushAs = (who: 'analyst' | 'manager', deviceId: string, changes: unknown[]) =>
    fx.api().post('/api/sync/push').set('authorization', as(who)).send({ deviceId, sentAt: Date.now(), changes });

  /** Answers are kept only once the instance listens (the first list request starts it); then one fill is kept. */
  async function warm() {
    for (let i = 0; i < 200 && !cache().active; i++) {
      await listed();
      await sleep(10);
    }
    expect(cache().active).toBe(true);
    // Notifications of earlier direct writes reach a PostgreSQL listener a moment after their commit.
    if (fx.database.kind === 'postgres') await sleep(200);
    await listed();
    expect(cache().size).toBeGreaterThan(0);
  }


  it('answers from the cache: a write the database did not announce stays unseen until it is announced', async () => {
    const runId = runIdsA[7];
    await warm();
    const before = (await rowOf(runId))!.sampleName;
    await fx.database.db.transaction(async (tx) => {
      await tx.execute(sql`alter table runs disable trigger runs_desk_update`);
      await tx.update(runs).set({ sampleName: 'Renamed without a notification (test)' }).where(eq(runs.id, runId));
      await tx.execute(sql`alter table runs enable trigger runs_desk_update`);
    });
    expect((await rowOf(runId))!.sampleName).toBe(before);
    await fx.database.query(`select pg_notify('halfmark_desk', $1)`, [fx.labA.id]);
    await eventually(async () => expect((await rowOf(runId))!.sampleName).toBe('Renamed without a notification (test)'));
    await fx.database.db.update(runs).set({ sampleName: before }).where(eq(runs.id, runId));
    await eventually(async () => expect((await rowOf(runId))!.sampleName).toBe(before));
  });

  it('a run, readings and an edit pushed from a phone show in the next list request, total and counts included', async () => {
    await warm();
    const total = (await listed()).total;
    const deviceId = v7();
    const runId = v7();
    const first = await pushAs('analyst', deviceId, [
      {
        id: runId,
        kind: 'run',
        seq: 1,
        recordedAt: Date.now(),
        payload: { labId: fx.labA.id, sampleName: 'Pushed while the desk looks (test)', status: 'recording', setup: { titrant: { lotLabel: 'NaOH-PUSHED-1' } } },
      },
      { id: v7(), kind: 'reading', seq: 2, recordedAt: Date.now(), payload: { runId, timeS: 0, pH: 3.1 } },
    ]);
    expect(first.body.results.map((r: { outcome: string }) => r.outcome)).toEqual(['accepted', 'accepted']);
    const after = await listed();
    expect(after.total).toBe(total + 1);
    expect(after.rows.find((r) => r.id === runId)).toMatchObject({ sampleName: 'Pushed while the desk looks (test)', readingCount: 1 });
    expect(after.facets.titrantLots).toContain('NaOH-PUSHED-1');

    await pushAs('analyst', deviceId, [{ id: v7(), kind: 'reading', seq: 3, recordedAt: Date.now(), payload: { runId, timeS: 5, pH: 3.2 } }]);
    expect((await rowOf(runId))!.readingCount).toBe(2);
    await pushAs('analyst', deviceId, [{ id: v7(), kind: 'run_meta_edit', seq: 4, recordedAt: Date.now(), payload: { runId, field: 'sampleName', value: 'Renamed on the phone (test)', baseVersion: 1 } }]);
    expect((await rowOf(runId))!.sampleName).toBe('Renamed on the phone (test)');
  });

  it('review steps and an import show in the next list request', async () => {
    const runId = runIdsA[8]; // finished, by the analyst
    await warm();
    expect((await rowOf(runId))!.status).toBe('finished');
    expect((await fx.api().post(`/api/runs/${runId}/submit`).set('authorization', as('analyst')).send({})).status).toBe(200);
    expect((await rowOf(runId))!.status).toBe('submitted');
    expect((await fx.api().post(`/api/runs/${runId}/return`).set('authorization', as('manager')).send({ comment: 'Redo the blank.' })).status).toBe(200);
    expect((await rowOf(runId))!.status).toBe('returned');

    const csv = ['time_s,pH', ...Array.from({ length: 12 }, (_v, i) => `${i * 10},${(3 + i * 0.1).toFixed(2)}`)].join('\n');
    const setup = { sampleName: 'Imported while listed (test)', sampleVolumeMl: 50, sampleMassG: 0.2, titrantConcentrationM: 0.1, rateMlPerS: 0.05 };
    const imported = await fx.api().post(`/api/labs/${fx.labA.id}/imports`).set('authorization', as('analyst')).send({ csv, mapping: { time: 'time_s', pH: 'pH' }, setup });
    expect(imported.status).toBe(201);
    expect(await rowOf(imported.body.runId)).toMatchObject({ sampleName: 'Imported while listed (test)', readingCount: 12 });
  });

  it('a change committed elsewhere (another server instance, a script) shows once the database announces it', async () => {
    const runId = runIdsA[10];
    await warm();
    const row = (await rowOf(runId))!;
    // Straight to the database, as another instance on the same PostgreSQL server would write it.
    const [first] = await fx.database.db.select().from(readings).where(eq(readings.runId, runId)).limit(1);
    await fx.database.db.insert(readings).values({ id: v7(), runId, labId: fx.labA.id, kind: 'reading', timeS: first.timeS + 0.5, pH: 3 });
    await eventually(async () => expect((await rowOf(runId))!.readingCount).toBe(row.readingCount + 1));
    // An analyst's new display name shows in every lab's lists.
    const [analyst] = await fx.database.db.select().from(users).where(eq(users.id, row.analystId));
    await fx.database.db.update(users).set({ displayName: 'Renamed analyst (test)' }).where(eq(users.id, analyst.id));
    await eventually(async () => expect((await rowOf(runId))!.analystName).toBe('Renamed analyst (test)'));
    await fx.database.db.update(users).set({ displayName: analyst.displayName }).where(eq(users.id, analyst.id));
    await eventually(async () => expect((await rowOf(runId))!.analystName).toBe(analyst.displayName));
  });
});
