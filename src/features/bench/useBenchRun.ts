// State of one run on the bench: the stored record, what follows from it, and the actions that write to the local
// database. A tap or a typed value is on screen at once, marked as saving; it is confirmed (counted, analysed,
// drawn) only when the store's write has committed, and a failed write takes it back with the error shown.
// The state sits in a per-run zustand store (screen state of the run being recorded), read through narrow hooks.
import { useDeferredValue, useEffect, useMemo, useState } from 'react';
import { useStore } from 'zustand';
import { createStore, type StoreApi } from 'zustand/vanilla';
import { mvToPH } from '../../../shared/calibration';
import { buildDeliveryMap, type DeliveryMap } from '../../../shared/engine';
import { deliverySchema } from '../../../shared/schemas/run-document';
import { useLocalDb } from '../../local/localDb';
import type { LocalStore, Recording } from '../../local/store';
import type { CheckpointRow, MarkKind, MarkRow, ReadingRow, RunEventRow, RunRecord } from '../../local/types';
import { clockStatus, elapsedS, type ClockEvent, type ClockStatus } from './clock';
import { monoNow } from './clockSource';
import { buildRunDocument, refillsOf, type BuiltDocument, type Refill } from './document';
import type { Effective } from './effective';
import type { EntryMode } from './keypad';
import { planRun, type PlanResult } from './plan';
import { loadState, withCheckpoint, withEvents, withMark, withReading, withRun, type RunState } from './runState';
import { runSetupSchema, type RunSetup } from './setup';

export type ReadingValue = { pH: number | null; mV: number | null; pHSource: ReadingRow['pHSource'] };

/** A mark waiting for its value; `saving` until the mark itself has committed. */
export type OpenMark = MarkRow & { saving: boolean };

/** A value typed and on screen while its write is in flight. */
export type UnsavedValue = { kind: 'reading'; row: ReadingRow } | { kind: 'checkpoint'; row: CheckpointRow };

/** What a typed value means for a reading: pH as typed, or mV converted with the electrode calibration if any. */
export function readingValue(setup: RunSetup, mode: Exclude<EntryMode, 'mL'>, value: number): ReadingValue {
  if (mode === 'pH') return { pH: value, mV: null, pHSource: 'typed' };
  const e = setup.electrode;
  if (!e) return { pH: null, mV: value, pHSource: 'mv-only' };
  const pH = mvToPH(e, value, setup.temperatureC ?? e.temperatureC);
  return { pH: Math.round(pH * 1000) / 1000, mV: value, pHSource: 'mv-calibrated' };
}

const NONE: readonly never[] = [];
const errorText = (e: unknown) => (e instanceof Error ? e.message : String(e));

/**
 * The screen's state of one run, in a small store of its own so each part of the screen subscribes to the slice it
 * shows: a tap changes `savingMarks` (only the entry panel re-renders), a typed value `unsaved` (the entry panel and
 * the rows being saved), a commit `run` (what the new record changes, nothing else).
 */
export interface BenchRunState {
  /** The stored record and its derived lists; undefined while loading, null if the run is not on this device. */
  run: RunState | null | undefined;
  /** Marks tapped whose write has not committed yet. */
  savingMarks: readonly MarkRow[];
  /** Values typed whose write has not committed yet. */
  unsaved: readonly UnsavedValue[];
  writeError: string | null;
}
export type RunStore = StoreApi<BenchRunState>;

/** Opens the run and returns its store and the actions that write to the local database (all stable). */
export function useBenchRun(runId: string) {
  const local = useLocalDb();
  const store: LocalStore | null = local.status === 'ready' ? local.store : null;
  const [runStore] = useState(() => createStore<BenchRunState>(() => ({ run: undefined, savingMarks: NONE, unsaved: NONE, writeError: null })));

  useEffect(() => {
    if (!store) return;
    let live = true;
    store.loadRun(runId).then(
      (r) => live && runStore.setState({ run: r ? loadState(r) : null }),
      (e) => live && runStore.setState({ writeError: `Could not read the run: ${errorText(e)}` }),
    );
    return () => {
      live = false;
    };
  }, [store, runId, runStore]);

  const actions = useMemo(() => runActions(store, runStore), [store, runStore]);
  return { local, store, runStore, actions };
}

export type BenchRun = ReturnType<typeof useBenchRun>;
export type RunActions = ReturnType<typeof runActions>;

function runActions(store: LocalStore | null, rs: RunStore) {
  const set = rs.setState;
  const update = (f: (cur: RunState) => RunState) => set((s) => (s.run ? { run: f(s.run) } : {}));
  const fail = (what: string, e: unknown) => set({ writeError: `Not saved (${what}): ${errorText(e)}` });

  const guard = async <T>(what: string, work: (s: LocalStore, r: RunState) => Promise<T>): Promise<T | undefined> => {
    const r = rs.getState().run;
    if (!store || !r) return undefined;
    try {
      const out = await work(store, r);
      set({ writeError: null });
      return out;
    } catch (e) {
      fail(what, e);
      return undefined;
    }
  };

  const clockAction = (kind: 'start' | 'pause' | 'resume' | 'finish', extra?: { refill?: { beforeMl: number; afterMl: number } }) =>
    guard(kind, async (s, r) => {
      const at = { monoMs: monoNow(), wallMs: Date.now() };
      const clock = clockEventsOf(r.record.events);
      const added: RunEventRow[] = [];
      if (kind === 'resume' && extra?.refill) {
        const pauseEv = [...clock].reverse().find((e) => e.kind === 'pause');
        const atS = pauseEv ? elapsedS(clock, pauseEv.monoMs) : elapsedS(clock, at.monoMs);
        added.push(await s.addEvent(r.record.run.id, 'refill', at, { atS, ...extra.refill }));
      }
      added.push(await s.addEvent(r.record.run.id, kind, at));
      const statusAfter = kind === 'start' || kind === 'resume' ? 'running' : kind === 'pause' ? 'paused' : 'finished';
      update((cur) => withEvents(cur, added, { ...cur.record.run, status: statusAfter }));
    });

  /**
   * A tap: `monoMs` is the pointer-down instant; its run time is fixed now. The mark is shown at once as saving
   * and confirmed when its write commits (a value can be typed for it meanwhile: the store writes in order, and
   * refuses a value whose mark is not stored).
   */
  const mark = (kind: MarkKind, monoMs: number): Promise<MarkRow | undefined> => {
    const r = rs.getState().run;
    if (!store || !r) return Promise.resolve(undefined);
    const clock = clockEventsOf(r.record.events);
    if (clockStatus(clock) !== 'running') {
      set({ writeError: 'Not saved (mark): the clock is not running' });
      return Promise.resolve(undefined);
    }
    const rec = store.recordMark(r.record.run.id, kind, elapsedS(clock, monoMs), { monoMs, wallMs: Date.now() });
    set((st) => ({ savingMarks: [...st.savingMarks, rec.row] }));
    const done = (st: BenchRunState) => st.savingMarks.filter((x) => x.id !== rec.row.id);
    return rec.saved.then(
      (m) => {
        // One update: the mark moves from saving to stored in the same render.
        set((st) => ({ savingMarks: done(st), run: st.run ? withMark(st.run, m) : st.run, writeError: null }));
        return m;
      },
      (e) => {
        set((st) => ({ savingMarks: done(st), writeError: `Not saved (mark): ${errorText(e)}` }));
        return undefined;
      },
    );
  };

  /** A typed value: in the table at once as saving, confirmed on commit; undefined (and the error shown) if not stored. */
  const enterValue = <T extends ReadingRow | CheckpointRow>(what: string, start: (s: LocalStore) => Recording<T>, pending: (row: T) => UnsavedValue, confirm: (cur: RunState, row: T) => RunState): Promise<T | undefined> => {
    if (!store || !rs.getState().run) return Promise.resolve(undefined);
    let rec: Recording<T>;
    try {
      rec = start(store);
    } catch (e) {
      fail(what, e);
      return Promise.resolve(undefined);
    }
    set((st) => ({ unsaved: [...st.unsaved, pending(rec.row)] }));
    const done = (st: BenchRunState) => st.unsaved.filter((x) => x.row.id !== rec.row.id);
    return rec.saved.then(
      (row) => {
        set((st) => ({ unsaved: done(st), run: st.run ? confirm(st.run, row) : st.run, writeError: null }));
        return row;
      },
      (e) => {
        set((st) => ({ unsaved: done(st), writeError: `Not saved (${what}): ${errorText(e)}` }));
        return undefined;
      },
    );
  };

  return {
    clockAction,
    mark,
    enterReading: (m: MarkRow, value: ReadingValue) => enterValue('reading', (s) => s.recordReading(m, value), (row) => ({ kind: 'reading', row }), withReading),
    enterCheckpoint: (m: MarkRow, buretteMl: number) => enterValue('checkpoint', (s) => s.recordCheckpoint(m, buretteMl), (row) => ({ kind: 'checkpoint', row }), withCheckpoint),
    discardMark: (m: MarkRow) =>
      guard('discard', async (s, r) => {
        const ev = await s.addEvent(r.record.run.id, 'discard-mark', { monoMs: monoNow(), wallMs: Date.now() }, { markId: m.id, reason: 'tapped by mistake' });
        update((cur) => withEvents(cur, [ev]));
      }),
    /** Resolves with the stored correction, or undefined (and the error shown) when it was not saved. */
    correctReading: (eff: Effective<ReadingRow>, value: ReadingValue | null, reason: string) =>
      guard('correction', async (s) => {
        const row = value ? await s.correctReading(eff.current, value, reason) : await s.deleteReading(eff.current, reason);
        update((cur) => withReading(cur, row));
        return row;
      }),
    correctCheckpoint: (eff: Effective<CheckpointRow>, buretteMl: number | null, reason: string) =>
      guard('correction', async (s) => {
        const row = await s.correctCheckpoint(eff.current, buretteMl, reason);
        update((cur) => withCheckpoint(cur, row));
        return row;
      }),
    saveNotes: (notes: string) =>
      guard('notes', async (s, r) => {
        const run = await s.updateRunMeta(r.record.run.id, { notes });
        update((cur) => withRun(cur, run));
      }),
    submit: () =>
      guard('submit', async (s, r) => {
        if (clockStatus(clockEventsOf(r.record.events)) !== 'finished') throw new Error('finish the run first');
        const ev = await s.addEvent(r.record.run.id, 'submit', { monoMs: monoNow(), wallMs: Date.now() });
        update((cur) => withEvents(cur, [ev], { ...cur.record.run, status: 'submitted' }));
      }),
    clearWriteError: () => set({ writeError: null }),
  };
}

// ---------- narrow views of the store (each re-renders its component only when its slice changes) ----------

/** 'loading', 'missing' (not on this device) or 'ok': changes once, unlike the record. */
export function useRunPresence(rs: RunStore): 'loading' | 'missing' | 'ok' {
  return useStore(rs, (s) => (s.run === undefined ? 'loading' : s.run === null ? 'missing' : 'ok'));
}

export function useRunLabel(rs: RunStore): string {
  return useStore(rs, (s) => s.run?.record.run.label ?? '');
}

/** The whole record (changes with every commit: for the review, not the recording screen). */
export function useRunRecord(rs: RunStore): RunRecord | null | undefined {
  return useStore(rs, (s) => (s.run === undefined ? undefined : (s.run?.record ?? null)));
}

export function useWriteError(rs: RunStore): string | null {
  return useStore(rs, (s) => s.writeError);
}

export type SetupResult = { ok: true; setup: RunSetup } | { ok: false; error: string } | null;

export function useRunSetup(rs: RunStore): SetupResult {
  const json = useStore(rs, (s) => s.run?.record.run.setup);
  return useMemo(() => {
    if (json === undefined) return null;
    const p = runSetupSchema.safeParse(json);
    return p.success ? { ok: true, setup: p.data } : { ok: false, error: p.error.issues.map((i) => i.message).join('; ') };
  }, [json]);
}

export function useClock(rs: RunStore): { clockEvents: ClockEvent[]; status: ClockStatus; events: readonly RunEventRow[] } {
  const events = useStore(rs, (s) => s.run?.record.events ?? NONE);
  return useMemo(() => {
    const clockEvents = clockEventsOf(events);
    return { clockEvents, status: clockStatus(clockEvents), events };
  }, [events]);
}

export function useReadings(rs: RunStore): readonly Effective<ReadingRow>[] {
  return useStore(rs, (s) => s.run?.readings ?? NONE);
}

export function useCheckpoints(rs: RunStore): readonly Effective<CheckpointRow>[] {
  return useStore(rs, (s) => s.run?.checkpoints ?? NONE);
}

export function useUnsaved(rs: RunStore): readonly UnsavedValue[] {
  return useStore(rs, (s) => s.unsaved);
}

/** Marks waiting for a value, oldest first: stored ones and those still being saved. */
export function useOpenMarks(rs: RunStore): OpenMark[] {
  const saved = useStore(rs, (s) => s.run?.pending ?? NONE);
  const saving = useStore(rs, (s) => s.savingMarks);
  return useMemo(() => [...saved.map((m) => ({ ...m, saving: false })), ...saving.map((m) => ({ ...m, saving: true }))].sort((a, b) => a.timeS - b.timeS), [saved, saving]);
}

export function usePlan(setup: SetupResult): PlanResult | null {
  return useMemo(() => (setup?.ok ? planRun(setup.setup) : null), [setup]);
}

/** Refills, and the time → volume map, which changes only with checkpoints and refills. */
export function useDelivery(rs: RunStore, setup: SetupResult): { refills: Refill[]; deliveryMap: DeliveryMap | null } {
  const { events } = useClock(rs);
  const checkpoints = useCheckpoints(rs);
  const refills = useMemo(() => refillsOf(events), [events]);
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
  return { refills, deliveryMap };
}

/** The run document the engine analyses; it follows the readings a moment behind, after the screen has shown them. */
export function useRunDocument(rs: RunStore, setup: SetupResult, refills: readonly Refill[]): BuiltDocument | null {
  const readings = useDeferredValue(useReadings(rs));
  const checkpoints = useDeferredValue(useCheckpoints(rs));
  return useMemo(() => (setup?.ok ? buildRunDocument(setup.setup, readings, checkpoints, refills) : null), [setup, readings, checkpoints, refills]);
}

function clockEventsOf(events: readonly RunEventRow[]): ClockEvent[] {
  return events.filter((e): e is typeof e & { kind: ClockEvent['kind'] } => ['start', 'pause', 'resume', 'finish'].includes(e.kind));
}

/** Everything at once, for the review after the finish (a screen with no taps to keep quick). */
export function useRunView(run: BenchRun) {
  const rs = run.runStore;
  const record = useRunRecord(rs);
  const setup = useRunSetup(rs);
  const { clockEvents, status } = useClock(rs);
  const readings = useReadings(rs);
  const checkpoints = useCheckpoints(rs);
  const { refills, deliveryMap } = useDelivery(rs, setup);
  const built = useRunDocument(rs, setup, refills);
  const writeError = useWriteError(rs);
  return { ...run.actions, store: run.store, record, setup, clockEvents, status, readings, checkpoints, refills, deliveryMap, built, writeError };
}
