// Following a run in progress (issue 6): the server's event stream when it can be read, polling the same route's JSON
// page when it cannot (no stream on this platform, a proxy that blocks or buffers it, a dropped connection), with the
// stream tried again now and then. Framework-free so the fallbacks can be tested with fake timers; the screen's hook
// is useLiveFollow.ts.
import type { PullResponse, PulledChange } from '../../../shared/schemas/sync';
import { ApiRequestError } from '../../api/errors';
import type { OpenEventStream } from '../../api/liveStream.types';

/** `paused` is set by the screen while it is hidden (the follower itself is stopped then). */
export type FollowMode = 'connecting' | 'live' | 'polling' | 'paused' | 'stopped';

export interface FollowState {
  mode: FollowMode;
  /** Why it polls or stopped, in words; null when there is nothing to explain. */
  note: string | null;
}

export interface FollowOptions {
  /** Pause between polls while the stream is unavailable: a new reading shows within about this long. */
  pollMs: number;
  /** The stream must say `ready` within this long, else it is taken as blocked (a buffering proxy, say). */
  readyTimeoutMs: number;
  /** No byte for this long (the server sends a heartbeat every 15 s) and the stream is taken as dead. */
  silenceMs: number;
  /** Waits before trying the stream again while polling, growing up to the last one. */
  retryStreamMs: readonly number[];
  /** Longest pause between polls while the server cannot be reached. */
  maxPollBackoffMs: number;
}

export const DEFAULT_FOLLOW_OPTIONS: FollowOptions = {
  pollMs: 2000,
  readyTimeoutMs: 6000,
  silenceMs: 40_000,
  retryStreamMs: [3000, 10_000, 30_000, 60_000],
  maxPollBackoffMs: 15_000,
};

export interface FollowDeps {
  runId: string;
  streamSupported: boolean;
  openStream: OpenEventStream;
  /** The route's JSON page: changes of the run after the cursor. */
  poll: (path: string) => Promise<PullResponse>;
  /** Changes of the run that arrived (stream or poll); never called with an empty list. */
  onChanges: (changes: PulledChange[]) => void;
  onState: (s: FollowState) => void;
  options?: Partial<FollowOptions>;
}

/** A trouble of the stream this follower noticed itself; its message is shown as is. */
class StreamTrouble extends Error {}

/** Errors after which following cannot go on: signed out, no longer allowed, the run is gone. */
const isFinal = (err: unknown) => err instanceof ApiRequestError && [401, 403, 404].includes(err.status);

export class LiveFollower {
  private readonly opt: FollowOptions;
  private cursor = 0;
  private state: FollowState = { mode: 'connecting', note: null };
  private stopped = false;
  private stream: AbortController | null = null;
  private streamReady = false;
  private readyTimer: ReturnType<typeof setTimeout> | null = null;
  private silenceTimer: ReturnType<typeof setTimeout> | null = null;
  private retryTimer: ReturnType<typeof setTimeout> | null = null;
  private pollTimer: ReturnType<typeof setTimeout> | null = null;
  private polling = false;
  /** Why it polls (shown again once an unreachable server answers). */
  private pollReason: string | null = null;
  private pollFailures = 0;
  private streamFailures = 0;

  constructor(private readonly deps: FollowDeps) {
    this.opt = { ...DEFAULT_FOLLOW_OPTIONS, ...deps.options };
  }

  get current(): FollowState {
    return this.state;
  }

  start(): void {
    if (this.deps.streamSupported) this.connect();
    else this.startPolling('This device cannot keep a live connection open.');
  }

  stop(note: string | null = null): void {
    if (this.stopped) return;
    this.stopped = true;
    this.closeStream();
    this.stopPolling();
    this.clear('retryTimer');
    this.set({ mode: 'stopped', note });
  }

  private get path() {
    return `/runs/${this.deps.runId}/live?after=${this.cursor}`;
  }

  private set(s: FollowState) {
    if (s.mode === this.state.mode && s.note === this.state.note) return;
    this.state = s;
    this.deps.onState(s);
  }

  private clear(t: 'readyTimer' | 'silenceTimer' | 'retryTimer' | 'pollTimer') {
    const id = this[t];
    if (id !== null) clearTimeout(id);
    this[t] = null;
  }

  private take(p: PullResponse) {
    if (p.cursor > this.cursor) this.cursor = p.cursor;
    if (p.changes.length) this.deps.onChanges(p.changes);
  }

  // ---- stream ----

  private connect() {
    if (this.stopped) return;
    const ctl = new AbortController();
    this.stream = ctl;
    this.streamReady = false;
    this.clear('readyTimer');
    this.readyTimer = setTimeout(() => this.streamFailed(ctl, new StreamTrouble('The live connection did not answer.')), this.opt.readyTimeoutMs);
    this.deps
      .openStream(this.path, {
        onEvent: (e) => {
          if (this.stream !== ctl) return;
          if (e.event === 'ready') {
            this.clear('readyTimer');
            this.streamReady = true;
            this.streamFailures = 0;
            this.stopPolling();
            this.set({ mode: 'live', note: null });
            this.armSilence(ctl);
          } else if (e.event === 'changes') {
            try {
              this.take(JSON.parse(e.data) as PullResponse);
            } catch {
              this.streamFailed(ctl, new StreamTrouble('The live connection sent something unreadable.'));
            }
          }
        },
        onActivity: () => {
          if (this.stream === ctl && this.streamReady) this.armSilence(ctl);
        },
      }, ctl.signal)
      .then(
        () => this.streamFailed(ctl, new StreamTrouble('The live connection closed.')),
        (err: unknown) => this.streamFailed(ctl, err),
      );
  }

  private armSilence(ctl: AbortController) {
    this.clear('silenceTimer');
    this.silenceTimer = setTimeout(() => this.streamFailed(ctl, new StreamTrouble('The live connection went quiet.')), this.opt.silenceMs);
  }

  private closeStream() {
    this.clear('readyTimer');
    this.clear('silenceTimer');
    this.stream?.abort();
    this.stream = null;
    this.streamReady = false;
  }

  private streamFailed(ctl: AbortController, err: unknown) {
    if (this.stopped || this.stream !== ctl) return; // a stream already replaced or closed on purpose
    this.closeStream();
    if (isFinal(err)) return this.stop((err as Error).message);
    this.streamFailures++;
    const waits = this.opt.retryStreamMs;
    const wait = waits[Math.min(this.streamFailures - 1, waits.length - 1)];
    // Other failures (network, a refused or aborted request, an answer that is no stream) read alike to a colleague.
    const why = err instanceof StreamTrouble ? err.message : 'The live connection could not be opened.';
    this.startPolling(`${why} Checking every ${Math.round(this.opt.pollMs / 1000)} s instead.`);
    this.clear('retryTimer');
    this.retryTimer = setTimeout(() => {
      this.retryTimer = null;
      this.connect();
    }, wait);
  }

  // ---- polling ----

  private startPolling(note: string) {
    if (this.stopped) return;
    this.pollReason = note;
    this.set({ mode: 'polling', note });
    if (this.polling) return;
    this.polling = true;
    this.pollFailures = 0;
    void this.pollOnce();
  }

  private stopPolling() {
    this.polling = false;
    this.clear('pollTimer');
  }

  private async pollOnce() {
    this.pollTimer = null;
    if (!this.polling || this.stopped) return;
    let wait = this.opt.pollMs;
    try {
      const page = await this.deps.poll(this.path);
      if (!this.polling || this.stopped) return;
      this.pollFailures = 0;
      this.take(page);
      if (page.more) wait = 0;
      this.set({ mode: 'polling', note: this.pollReason });
    } catch (err) {
      if (!this.polling || this.stopped) return;
      if (isFinal(err)) return this.stop((err as Error).message);
      this.pollFailures++;
      wait = Math.min(this.opt.maxPollBackoffMs, this.opt.pollMs * 2 ** this.pollFailures);
      this.set({ mode: 'polling', note: `The server cannot be reached; trying again in ${Math.round(wait / 1000)} s.` });
    }
    this.pollTimer = setTimeout(() => void this.pollOnce(), wait);
  }
}

/**
 * Runs `task` now, or once more after the run in flight when asked again meanwhile: a burst of notifications costs
 * at most two refetches, and the last one starts after the last notification.
 */
export function coalesce(task: () => Promise<unknown>): () => Promise<void> {
  let running: Promise<void> | null = null;
  let again = false;
  return () => {
    if (running) {
      again = true;
      return running;
    }
    running = (async () => {
      try {
        do {
          again = false;
          await task().catch(() => undefined);
        } while (again);
      } finally {
        running = null;
      }
    })();
    return running;
  };
}
