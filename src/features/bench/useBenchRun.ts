// State of one run on the bench: the stored record, what follows from it, and the actions that write to the local
// database. Every action updates the screen only after the store's write has committed.
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { mvToPH } from '../../../shared/calibration';
import { buildDeliveryMap, type DeliveryMap } from '../../../shared/engine';
import { deliverySchema } from '../../../shared/schemas/run-document';
import { useLocalDb } from '../../local/localDb';
import type { LocalStore } from '../../local/store';
import type { CheckpointRow, MarkKind, MarkRow, ReadingRow, RunEventRow, RunRecord } from '../../local/types';
import { clockStatus, elapsedS, type ClockEvent } from './clock';
import { monoNow } from './clockSource';
import { buildRunDocument, refillsOf } from './document';
import { effectiveCheckpoints, effectiveReadings, pendingMarks, type Effective } from './effective';
import type { EntryMode } from './keypad';
import { planRun, type PlanResult } from './plan';
import { runSetupSchema, type RunSetup } from './setup';

export type ReadingValue = { pH: number | null; mV: number | null; pHSource: ReadingRow['pHSource'] };

/** What a typed value means for a reading: pH as typed, or mV converted with the electrode calibration if any. */
export function readingValue(setup: RunSetup, mode: Exclude<EntryMode, 'mL'>, value: number): ReadingValue {
  if (mode === 'pH') return { pH: value, mV: null, pHSource: 'typed' };
  const e = setup.electrode;
  if (!e) return { pH: null, mV: value, pHSource: 'mv-only' };
  const pH = mvToPH(e, value, setup.temperatureC ?? e.temperatureC);
  return { pH: Math.round(pH * 1000) / 1000, mV: value, pHSource: 'mv-calibrated' };
}

export function useBenchRun(runId: string) {
  const local = useLocalDb();
  const store: LocalStore | null = local.status === 'ready' ? local.store : null;
  const [record, setRecord] = useState<RunRecord | null | undefined>(undefined);
  const [writeError, setWriteError] = useState<string | null>(null);
  const recRef = useRef<RunRecord | null>(null);
  recRef.current = record ?? null;

  useEffect(() => {
    if (!store) return;
    let live = true;
    store.loadRun(runId).then(
      (r) => live && setRecord(r),
      (e) => live && setWriteError(`Could not read the run: ${e instanceof Error ? e.message : e}`),
    );
    return () => {
      live = false;
    };
  }, [store, runId]);

  const setup = useMemo<{ ok: true; setup: RunSetup } | { ok: false; error: string } | null>(() => {
    if (!record) return null;
    const p = runSetupSchema.safeParse(record.run.setup);
    return p.success ? { ok: true, setup: p.data } : { ok: false, error: p.error.issues.map((i) => i.message).join('; ') };
  }, [record]);

  const clockEvents = useMemo<ClockEvent[]>(
    () => (record?.events ?? []).filter((e): e is typeof e & { kind: ClockEvent['kind'] } => ['start', 'pause', 'resume', 'finish'].includes(e.kind)),
    [record?.events],
  );
  const status = useMemo(() => (record ? clockStatus(clockEvents) : 'ready'), [record, clockEvents]);
  const readings = useMemo(() => effectiveReadings(record?.readings ?? []), [record?.readings]);
  const checkpoints = useMemo(() => effectiveCheckpoints(record?.checkpoints ?? []), [record?.checkpoints]);
  const pending = useMemo(
    () => (record ? pendingMarks(record.marks, record.readings, record.checkpoints, record.events) : []),
    [record],
  );
  const refills = useMemo(() => refillsOf(record?.events ?? []), [record?.events]);
  const plan = useMemo<PlanResult | null>(() => (setup?.ok ? planRun(setup.setup) : null), [setup]);

  const built = useMemo(() => (setup?.ok ? buildRunDocument(setup.setup, readings, checkpoints, refills) : null), [setup, readings, checkpoints, refills]);

  // The time → volume map changes only with checkpoints; readings are placed on it as they come.
  const deliveryMap = useMemo<DeliveryMap | null>(() => {
    if (!setup?.ok) return null;
    const doc = buildRunDocument(setup.setup, [], checkpoints, refills);
    const d = deliverySchema.safeParse({
      rateMlPerS: setup.setup.delivery.rateMlPerS,
      ...(setup.setup.delivery.drainVolumeMl !== undefined ? { drainVolumeMl: setup.setup.delivery.drainVolumeMl } : {}),
      checkpoints: doc.doc?.delivery.checkpoints ?? [{ timeS: 0, buretteMl: setup.setup.delivery.startBuretteMl }],
    });
    if (!d.success) {
      // e.g. a mistyped checkpoint lower than the one before: fall back to the calibrated rate from the start.
      return buildDeliveryMap(deliverySchema.parse({ rateMlPerS: setup.setup.delivery.rateMlPerS, checkpoints: [{ timeS: 0, buretteMl: setup.setup.delivery.startBuretteMl }] }));
    }
    return buildDeliveryMap(d.data);
  }, [setup, checkpoints, refills]);

  const guard = useCallback(
    async <T>(what: string, work: (s: LocalStore, r: RunRecord) => Promise<T>): Promise<T | undefined> => {
      const r = recRef.current;
      if (!store || !r) return undefined;
      try {
        const out = await work(store, r);
        setWriteError(null);
        return out;
      } catch (e) {
        setWriteError(`Not saved (${what}): ${e instanceof Error ? e.message : String(e)}`);
        return undefined;
      }
    },
    [store],
  );

  const clockAction = useCallback(
    (kind: 'start' | 'pause' | 'resume' | 'finish', extra?: { refill?: { beforeMl: number; afterMl: number } }) =>
      guard(kind, async (s, r) => {
        const at = { monoMs: monoNow(), wallMs: Date.now() };
        const added: RunEventRow[] = [];
        if (kind === 'resume' && extra?.refill) {
          const pauseEv = [...clockEventsOf(r)].reverse().find((e) => e.kind === 'pause');
          const atS = pauseEv ? elapsedS(clockEventsOf(r), pauseEv.monoMs) : elapsedS(clockEventsOf(r), at.monoMs);
          added.push(await s.addEvent(r.run.id, 'refill', at, { atS, ...extra.refill }));
        }
        added.push(await s.addEvent(r.run.id, kind, at));
        const statusAfter = kind === 'start' || kind === 'resume' ? 'running' : kind === 'pause' ? 'paused' : 'finished';
        setRecord((cur) => (cur ? { ...cur, events: [...cur.events, ...added], run: { ...cur.run, status: statusAfter } } : cur));
      }),
    [guard],
  );

  /** A tap: `monoMs` is the pointer-down instant; its run time is fixed now and stored before it is shown. */
  const mark = useCallback(
    (kind: MarkKind, monoMs: number) =>
      guard('mark', async (s, r) => {
        const events = clockEventsOf(r);
        if (clockStatus(events) !== 'running') throw new Error('the clock is not running');
        const m = await s.addMark(r.run.id, kind, elapsedS(events, monoMs), { monoMs, wallMs: Date.now() });
        setRecord((cur) => (cur ? { ...cur, marks: [...cur.marks, m] } : cur));
        return m;
      }),
    [guard],
  );

  const enterReading = useCallback(
    (m: MarkRow, value: ReadingValue) =>
      guard('reading', async (s) => {
        const row = await s.addReading(m, value);
        setRecord((cur) => (cur ? { ...cur, readings: [...cur.readings, row] } : cur));
        return row;
      }),
    [guard],
  );

  const enterCheckpoint = useCallback(
    (m: MarkRow, buretteMl: number) =>
      guard('checkpoint', async (s) => {
        const row = await s.addCheckpoint(m, buretteMl);
        setRecord((cur) => (cur ? { ...cur, checkpoints: [...cur.checkpoints, row] } : cur));
        return row;
      }),
    [guard],
  );

  const discardMark = useCallback(
    (m: MarkRow) =>
      guard('discard', async (s, r) => {
        const ev = await s.addEvent(r.run.id, 'discard-mark', { monoMs: monoNow(), wallMs: Date.now() }, { markId: m.id, reason: 'tapped by mistake' });
        setRecord((cur) => (cur ? { ...cur, events: [...cur.events, ev] } : cur));
      }),
    [guard],
  );

  const correctReading = useCallback(
    (eff: Effective<ReadingRow>, value: ReadingValue | null, reason: string) =>
      guard('correction', async (s) => {
        const row = value ? await s.correctReading(eff.current, value, reason) : await s.deleteReading(eff.current, reason);
        setRecord((cur) => (cur ? { ...cur, readings: [...cur.readings, row] } : cur));
      }),
    [guard],
  );

  const correctCheckpoint = useCallback(
    (eff: Effective<CheckpointRow>, buretteMl: number | null, reason: string) =>
      guard('correction', async (s) => {
        const row = await s.correctCheckpoint(eff.current, buretteMl, reason);
        setRecord((cur) => (cur ? { ...cur, checkpoints: [...cur.checkpoints, row] } : cur));
      }),
    [guard],
  );

  const saveNotes = useCallback(
    (notes: string) =>
      guard('notes', async (s, r) => {
        const run = await s.updateRunMeta(r.run.id, { notes });
        setRecord((cur) => (cur ? { ...cur, run } : cur));
      }),
    [guard],
  );

  const submit = useCallback(
    () =>
      guard('submit', async (s, r) => {
        if (clockStatus(clockEventsOf(r)) !== 'finished') throw new Error('finish the run first');
        const ev = await s.addEvent(r.run.id, 'submit', { monoMs: monoNow(), wallMs: Date.now() });
        setRecord((cur) => (cur ? { ...cur, events: [...cur.events, ev], run: { ...cur.run, status: 'submitted' } } : cur));
      }),
    [guard],
  );

  return {
    local,
    store,
    record,
    setup,
    status,
    clockEvents,
    readings,
    checkpoints,
    pending,
    refills,
    plan,
    built,
    deliveryMap,
    writeError,
    clearWriteError: () => setWriteError(null),
    clockAction,
    mark,
    enterReading,
    enterCheckpoint,
    discardMark,
    correctReading,
    correctCheckpoint,
    saveNotes,
    submit,
  };
}

export type BenchRun = ReturnType<typeof useBenchRun>;

function clockEventsOf(r: RunRecord): ClockEvent[] {
  return r.events.filter((e): e is typeof e & { kind: ClockEvent['kind'] } => ['start', 'pause', 'resume', 'finish'].includes(e.kind));
}
