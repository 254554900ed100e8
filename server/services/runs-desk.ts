import { analyzeRun, buildDeliveryMap } from '../../shared/engine';
import type {
  CalibrationUsed,
  CheckpointRow,
  Comment,
  HistoryEntry,
  ReadingRow,
  RunDetail,
  RunListQuery,
  RunListResponse,
  RunRow,
} from '../../shared/schemas/desk';
import { runDocumentSchema, type RunDocument } from '../../shared/schemas/run-document';
import { buildRunDocument, refillsOf } from '../../src/features/bench/document';
import { runSetupSchema, type RunSetup } from '../../src/features/bench/setup';
import type { ServerContext } from '../auth/context';
import { notFound } from '../http/errors';
import { JsonText, type Caller } from '../http/routes';
import type { Executor } from '../repos/executor';
import * as repo from '../repos/runs-desk';
import * as attachmentsRepo from '../repos/runs-attachments';
import { audit } from './audit';
import { isLocked } from './runs-review';

const iso = (d: Date | string | null | undefined) => (d == null ? null : new Date(d).toISOString());

/**
 * The runs table: one page with the total and the filter pickers, as JSON text. Answers are cached per lab until
 * the lab's runs change (server/services/notified-cache.ts); the pickers are shared by every page and filter.
 */
export async function listRuns(app: ServerContext, labId: string, q: RunListQuery): Promise<JsonText> {
  const db = app.database.db;
  return app.labCache.get(labId, `runs:${listKey(q)}`, async () => {
    const [page, facets] = await Promise.all([runsPage(db, labId, q), app.labCache.get(labId, 'facets', () => repo.facets(db, labId))]);
    const body: RunListResponse = { ...page, facets };
    return new JsonText(JSON.stringify(body));
  });
}

async function runsPage(db: Executor, labId: string, q: RunListQuery): Promise<Omit<RunListResponse, 'facets'>> {
  const rows = await repo.listRuns(db, labId, q);
  return {
    rows: rows.map(({ total: _t, ...r }) => ({
      ...r,
      createdAt: r.createdAt.toISOString(),
      updatedAt: r.updatedAt.toISOString(),
      lastReceivedAt: iso(r.lastReceivedAt),
    })),
    // A page past the end has no row to carry the window count.
    total: rows[0]?.total ?? (q.page > 1 ? await repo.countRuns(db, labId, q) : 0),
    page: q.page,
    pageSize: q.pageSize,
  };
}

/** The parsed query in a fixed key order, so equal queries share one cached answer. */
function listKey(q: RunListQuery): string {
  const keys = (Object.keys(q) as (keyof RunListQuery)[]).filter((k) => q[k] !== undefined).sort();
  return JSON.stringify(keys.map((k) => [k, q[k]]));
}

type DbReading = Awaited<ReturnType<typeof repo.readingsOf>>[number];
type DbCheckpoint = Awaited<ReturnType<typeof repo.checkpointsOf>>[number];
type DbEvent = Awaited<ReturnType<typeof repo.eventsOf>>[number];

/** Follows each correction chain to its end; a withdrawal ('deletion') ends the chain with nothing in force. */
export function effectiveChains<T extends { id: string; replacesId: string | null }>(rows: readonly T[], withdrawn: (r: T) => boolean) {
  const next = new Map<string, T>();
  for (const r of rows) if (r.replacesId) next.set(r.replacesId, r);
  const supersededBy = new Map<string, string>();
  for (const r of rows) if (r.replacesId) supersededBy.set(r.replacesId, r.id);
  const current: T[] = [];
  for (const r of rows) {
    if (r.replacesId) continue;
    let cur = r;
    const seen = new Set([r.id]);
    for (let n = next.get(cur.id); n && !seen.has(n.id); n = next.get(cur.id)) {
      seen.add(n.id);
      cur = n;
    }
    if (!withdrawn(cur)) current.push(cur);
  }
  return { current, supersededBy };
}

const isWithdrawal = (r: { kind?: string; pH?: number | null; mV?: number | null; buretteMl?: number | null }) =>
  r.kind === 'deletion' || r.kind === 'withdrawal';

/** The run document the engine analyses, from the setup the bench recorded and the records in force. */
export function runDocumentOf(
  setupJson: unknown,
  sampleName: string,
  rs: readonly DbReading[],
  cps: readonly DbCheckpoint[],
  evs: readonly DbEvent[],
): { doc: RunDocument | null; setup: RunSetup | null; error: string | null; notes: string[] } {
  const parsed = runSetupSchema.safeParse({ label: sampleName, ...(setupJson as object) });
  if (!parsed.success) return { doc: null, setup: null, error: 'The run setup is incomplete, so it cannot be analysed.', notes: [] };
  const setup = parsed.data;
  const readings = effectiveChains(rs, isWithdrawal).current.map((r) => ({
    current: { ...r, voided: false, markId: r.id, pHSource: 'typed', runId: r.runId, wallMs: 0 } as never,
    history: [],
  }));
  const checkpoints = effectiveChains(cps, (c) => c.buretteMl === null).current.map((c) => ({
    current: { ...c, voided: false, markId: c.id, wallMs: 0 } as never,
    history: [],
  }));
  readings.sort((a, b) => (a.current as DbReading).timeS - (b.current as DbReading).timeS);
  const refills = refillsOf(evs.map((e) => ({ id: e.id, runId: e.runId, kind: e.kind as never, monoMs: 0, wallMs: 0, data: (e.detail as Record<string, unknown>) ?? null })));
  const built = buildRunDocument(setup, readings, checkpoints, refills);
  if (!built.doc) return { doc: null, setup, error: built.notes.join(' '), notes: built.notes };
  const doc = runDocumentSchema.safeParse(built.doc);
  if (!doc.success) return { doc: null, setup, error: doc.error.issues.map((i) => i.message).join('; '), notes: built.notes };
  return { doc: doc.data, setup, error: null, notes: built.notes };
}

export function analyse(doc: RunDocument | null) {
  if (!doc) return { analysis: null, error: null as string | null };
  try {
    return { analysis: analyzeRun(doc), error: null };
  } catch (err) {
    return { analysis: null, error: err instanceof Error ? err.message : String(err) };
  }
}

function calibrationsUsed(setup: RunSetup | null, raw: Record<string, unknown>, labSettings: Record<string, unknown>, at: Date): CalibrationUsed[] {
  if (!setup) return [];
  const out: CalibrationUsed[] = [];
  const t = setup.titrant;
  const lotLabel = (raw.titrant as { lotLabel?: string } | undefined)?.lotLabel;
  out.push({
    kind: 'titrant',
    label: t.source === 'lab' ? `Titrant lot ${lotLabel ?? t.lotId ?? ''}`.trim() : 'Titrant (typed by hand)',
    value: `${t.concentrationM} mol/L${t.uConcentrationM ? ` ± ${t.uConcentrationM}` : ''}${t.standardisedOn ? `, standardised ${t.standardisedOn}` : ''}`,
    state: t.source === 'lab' ? 'lab record' : 'manual',
    id: t.lotId ?? null,
  });
  const d = setup.delivery;
  out.push({
    kind: 'drip-rate',
    label: d.source === 'lab' ? 'Drip-rate calibration' : 'Drip rate (typed by hand)',
    value: `${d.rateMlPerS} mL/s${d.uRateMlPerS ? ` ± ${d.uRateMlPerS}` : ''}${d.drainVolumeMl ? `, drain model ${d.drainVolumeMl} mL` : ''}; start ${d.startBuretteMl} mL`,
    state: d.source === 'lab' ? 'lab record' : 'manual',
    id: d.calibrationId ?? null,
  });
  const e = setup.electrode;
  if (e) {
    const limitH = Number(labSettings.electrodeMaxAgeHours ?? 24);
    const ageH = (at.getTime() - e.calibratedAtMs) / 3_600_000;
    out.push({
      kind: 'electrode',
      label: e.source === 'lab' ? 'Electrode calibration' : 'Electrode (typed by hand)',
      value: `slope ${e.slopeMvPerPH} mV/pH, offset ${e.offsetMv} mV at ${e.temperatureC} °C, calibrated ${new Date(e.calibratedAtMs).toISOString().slice(0, 16).replace('T', ' ')} UTC`,
      state: ageH > limitH ? `older than the lab's ${limitH} h limit at the run (${Math.floor(ageH)} h)` : 'within the lab limit at the run',
      id: e.calibrationId ?? null,
    });
  } else {
    out.push({ kind: 'electrode', label: 'Electrode calibration', value: 'none recorded', state: 'none', id: null });
  }
  return out;
}

export async function runDetail(app: ServerContext, caller: Caller, labId: string, runId: string): Promise<RunDetail> {
  const db = app.database.db;
  const found = await repo.runWithAnalyst(db, runId);
  if (!found || found.run.labId !== labId) throw notFound('Run');
  const { run } = found;
  const [rs, cps, evs, comments, review, rev, atts, history, labRow, clockFlags] = await Promise.all([
    repo.readingsOf(db, runId),
    repo.checkpointsOf(db, runId),
    repo.eventsOf(db, runId),
    repo.commentsOf(db, runId),
    repo.reviewOf(db, runId),
    repo.currentRevision(db, runId),
    attachmentsRepo.listForRun(db, runId),
    repo.auditOfRun(db, runId),
    repo.labSettings(db, labId),
    repo.clockFlagsOf(db, runId),
  ]);
  const built = runDocumentOf(run.setup, run.sampleName, rs, cps, evs);
  const { analysis, error } = analyse(built.doc);
  const map = built.doc ? safeMap(built.doc) : null;

  const readingSup = effectiveChains(rs, isWithdrawal).supersededBy;
  const checkpointSup = effectiveChains(cps, (c) => c.buretteMl === null).supersededBy;
  const readingRows: ReadingRow[] = rs.map((r) => ({
    id: r.id,
    kind: r.kind,
    timeS: r.timeS,
    pH: r.pH,
    mV: r.mV,
    replacesId: r.replacesId,
    reason: r.reason,
    receivedAt: r.receivedAt.toISOString(),
    supersededBy: readingSup.get(r.id) ?? null,
    volumeMl: map ? round(Math.max(0, map.volumeAt(r.timeS)), 4) : null,
  }));
  const checkpointRows: CheckpointRow[] = cps.map((c) => ({
    id: c.id,
    timeS: c.timeS,
    buretteMl: c.buretteMl,
    replacesId: c.replacesId,
    reason: c.reason,
    supersededBy: checkpointSup.get(c.id) ?? null,
  }));
  const stats = readingRows.filter((r) => r.kind === 'reading');
  const role = caller.roleIn(labId);
  const locked = Boolean(rev?.rev.lockedAt);
  const row: RunRow = {
    id: run.id,
    sampleName: run.sampleName,
    analystId: run.analystId,
    analystName: found.analystName,
    status: run.status,
    createdAt: run.createdAt.toISOString(),
    updatedAt: run.updatedAt.toISOString(),
    equivalenceVolumeMl: analysis?.equivalencePoints[0]?.volumeMl ?? null,
    pKa: analysis?.pKa[0] ?? null,
    molarMassGPerMol: analysis?.molarMassGPerMol ?? null,
    concentrationM: analysis?.analyteConcentrationM ?? null,
    titrantLot: (run.setup as { titrant?: { lotLabel?: string; lotId?: string } }).titrant?.lotLabel ?? (run.setup as { titrant?: { lotId?: string } }).titrant?.lotId ?? null,
    readingCount: stats.length,
    lastReceivedAt: rs.length ? iso(rs.reduce((m, r) => (r.receivedAt > m ? r.receivedAt : m), rs[0].receivedAt)) : null,
    isDemo: run.isDemo,
  };
  const historyRows: HistoryEntry[] = [
    { at: run.createdAt.toISOString(), actorName: found.analystName, action: 'created', detail: `Run of ${run.sampleName} created` },
    ...history.map((h) => ({ at: h.at.toISOString(), actorName: h.actorName, action: h.action, detail: describeAudit(h.action, h.after) })),
    ...rs
      .filter((r) => r.replacesId)
      .map((r) => ({
        at: r.receivedAt.toISOString(),
        actorName: null,
        action: r.kind === 'deletion' ? 'reading.withdraw' : 'reading.correct',
        detail: `${r.kind === 'deletion' ? 'Reading withdrawn' : `Reading corrected to pH ${r.pH ?? '—'}`}: ${r.reason ?? ''}`,
      })),
  ].sort((a, b) => a.at.localeCompare(b.at));

  return {
    run: { ...row, notes: run.notes, version: run.version, setup: run.setup as Record<string, unknown>, labId: run.labId },
    revision: {
      revision: rev?.rev.revision ?? 1,
      lockedAt: iso(rev?.rev.lockedAt),
      approvedByName: rev?.approvedByName ?? null,
      approvalMeaning: rev?.rev.approvalMeaning ?? null,
    },
    analysis,
    analysisError: error ?? built.error,
    readings: readingRows,
    checkpoints: checkpointRows,
    events: evs.map((e) => ({ id: e.id, kind: e.kind, timeS: e.timeS, detail: e.detail, receivedAt: e.receivedAt.toISOString() })),
    calibrations: calibrationsUsed(built.setup, run.setup as Record<string, unknown>, labRow ?? {}, run.createdAt),
    comments: comments.map((c) => ({ ...c, createdAt: c.createdAt.toISOString() })),
    review: review.map((r) => ({ ...r, kind: r.kind as 'submit', at: r.at.toISOString() })),
    attachments: atts.map(attachmentsRepo.toApi),
    history: historyRows,
    clockFlags: clockFlags.map((f) => ({ deviceId: f.deviceId, offsetMs: f.offsetMs, flaggedAt: f.flaggedAt.toISOString() })),
    can: {
      comment: Boolean(role),
      submit: !locked && (role === 'analyst' || role === 'manager') && ['finished', 'returned', 'recording', 'ready'].includes(run.status),
      review: !locked && role === 'manager' && run.status === 'submitted',
      reopen: locked && (role === 'manager' || role === 'analyst'),
      attach: role === 'analyst' || role === 'manager',
    },
  };
}

function safeMap(doc: RunDocument) {
  try {
    return buildDeliveryMap(doc.delivery, doc.readings[doc.readings.length - 1]?.timeS);
  } catch {
    return null;
  }
}

const round = (x: number, d: number) => Math.round(x * 10 ** d) / 10 ** d;

function describeAudit(action: string, after: unknown): string {
  const a = (after ?? {}) as Record<string, unknown>;
  switch (action) {
    case 'run.submit':
      return `Submitted for review${a.note ? `: ${a.note}` : ''}`;
    case 'run.return':
      return `Returned to the analyst: ${a.comment ?? ''}`;
    case 'run.approve':
      return `Approved (revision ${a.revision}): ${a.meaning ?? ''}`;
    case 'run.reopen':
      return `New revision ${a.revision} opened: ${a.reason ?? ''}`;
    case 'run.import':
      return `Imported from ${a.fileRows ?? '?'} rows of a CSV file`;
    case 'run.comment':
      return 'Comment added';
    case 'attachment.upload':
      return `Attached ${a.originalName ?? 'a file'}`;
    default:
      return action;
  }
}

export async function addComment(app: ServerContext, caller: Caller, labId: string, runId: string, body: string): Promise<Comment> {
  const db = app.database.db;
  const found = await repo.runWithAnalyst(db, runId);
  if (!found || found.run.labId !== labId) throw notFound('Run');
  return db.transaction(async (tx) => {
    // The database clock orders the thread (two comments in one millisecond still keep their order).
    const row = await repo.insertComment(tx, { runId, labId, authorId: caller.userId, body });
    await audit(tx, { labId, actorId: caller.userId, action: 'run.comment', entity: 'run', entityId: runId, after: { commentId: row.id } });
    return { id: row.id, authorId: caller.userId, authorName: caller.displayName, body: row.body, createdAt: row.createdAt.toISOString() };
  });
}

export { isLocked };
export type { Executor };
