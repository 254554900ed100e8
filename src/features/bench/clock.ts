// Run clock math, pure. Instants are milliseconds on one monotonic timeline: `performance.timeOrigin +
// performance.now()` (see clockSource.ts). Within a page that is performance.now() plus a constant, so intervals are
// monotonic; across a reload the new page's timeOrigin re-anchors it, which is how a reloaded page finds the running
// clock from the stored anchors. Elapsed run time excludes pauses (a refill stops the drip, and the engine maps drip
// time to volume).

export type ClockEventKind = 'start' | 'pause' | 'resume' | 'finish';
export type ClockStatus = 'ready' | 'running' | 'paused' | 'finished';

export interface ClockEvent {
  kind: ClockEventKind;
  /** Monotonic-timeline instant (ms). */
  monoMs: number;
  /** Device wall clock at the event (ms since epoch); only for noticing a sleeping device, never for timing. */
  wallMs: number;
}

const NEXT: Record<ClockStatus, Partial<Record<ClockEventKind, ClockStatus>>> = {
  ready: { start: 'running' },
  running: { pause: 'paused', finish: 'finished' },
  paused: { resume: 'running', finish: 'finished' },
  finished: {},
};

export class ClockError extends Error {}

/** Status after a list of events; throws on an impossible sequence (a corrupt record must not pass silently). */
export function clockStatus(events: readonly ClockEvent[]): ClockStatus {
  let status: ClockStatus = 'ready';
  let last = -Infinity;
  for (const e of events) {
    const next: ClockStatus | undefined = NEXT[status][e.kind];
    if (!next) throw new ClockError(`a "${e.kind}" cannot follow a clock that is ${status}`);
    if (e.monoMs < last) throw new ClockError(`clock events go back in time at "${e.kind}"`);
    last = e.monoMs;
    status = next;
  }
  return status;
}

export function canApply(events: readonly ClockEvent[], kind: ClockEventKind): boolean {
  return NEXT[clockStatus(events)][kind] !== undefined;
}

/** Elapsed drip time (s) at instant `nowMs`, pauses excluded; frozen while paused and after finish. */
export function elapsedS(events: readonly ClockEvent[], nowMs: number): number {
  let total = 0;
  let runningSince: number | null = null;
  for (const e of events) {
    if (e.kind === 'start' || e.kind === 'resume') runningSince = e.monoMs;
    else if (runningSince !== null) {
      total += e.monoMs - runningSince;
      runningSince = null;
    }
  }
  if (runningSince !== null) total += Math.max(0, nowMs - runningSince);
  return total / 1000;
}

/** Paused intervals as drip-time instants (s): the moment the drip stopped, and how long (s) it stayed stopped. */
export function pauses(events: readonly ClockEvent[]): { atS: number; durationS: number | null }[] {
  const out: { atS: number; durationS: number | null }[] = [];
  for (let i = 0; i < events.length; i++) {
    const e = events[i];
    if (e.kind !== 'pause') continue;
    const resume = events.slice(i + 1).find((x) => x.kind === 'resume');
    out.push({ atS: elapsedS(events.slice(0, i + 1), e.monoMs), durationS: resume ? (resume.monoMs - e.monoMs) / 1000 : null });
  }
  return out;
}

/**
 * Seconds the device wall clock moved more than the monotonic clock since the start. A few browsers stop
 * performance.now() while the device sleeps; a large value means the run clock may have missed that time.
 * Wall clocks can also be set by hand, so this only warns.
 */
export function sleepGapS(events: readonly ClockEvent[], nowMono: number, nowWall: number): number {
  const start = events.find((e) => e.kind === 'start');
  if (!start) return 0;
  return (nowWall - start.wallMs - (nowMono - start.monoMs)) / 1000;
}

/** mm:ss.s for the big display; hours roll into minutes (a run never lasts that long, but it must not wrap). */
export function formatClock(seconds: number): string {
  const s = Math.max(0, seconds);
  const tenths = Math.floor(s * 10 + 1e-9);
  const min = Math.floor(tenths / 600);
  const rest = (tenths % 600) / 10;
  return `${String(min).padStart(2, '0')}:${rest.toFixed(1).padStart(4, '0')}`;
}
