import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import type { PullResponse, PulledChange } from '../../../shared/schemas/sync';
import { ApiRequestError } from '../../api/errors';
import type { StreamHandlers } from '../../api/liveStream.types';
import { coalesce, LiveFollower, type FollowDeps, type FollowState } from './liveFollow';

const RUN = '0190f1a2-0000-7000-8000-000000000001';

const change = (seq: number): PulledChange => ({ seq, entity: 'reading', record: { id: `r${seq}` } });
const page = (seqs: number[], cursor: number, more = false): PullResponse => ({ changes: seqs.map(change), cursor, more });

/** A scripted server: streams that the test opens, answers and breaks; polls answered from a queue. */
function harness(opts: { streamSupported?: boolean } = {}) {
  const streams: { path: string; h: StreamHandlers; signal: AbortSignal; end: () => void; fail: (e: unknown) => void }[] = [];
  const polls: string[] = [];
  const answers: (PullResponse | Error)[] = [];
  const seen: number[] = [];
  const states: FollowState[] = [];
  const deps: FollowDeps = {
    runId: RUN,
    streamSupported: opts.streamSupported ?? true,
    openStream: (path, h, signal) =>
      new Promise<void>((resolve, reject) => {
        streams.push({ path, h, signal, end: resolve, fail: reject });
        signal.addEventListener('abort', () => resolve());
      }),
    poll: async (path) => {
      polls.push(path);
      const a = answers.shift() ?? page([], Number(/after=(\d+)/.exec(path)![1]));
      if (a instanceof Error) throw a;
      return a;
    },
    onChanges: (cs) => seen.push(...cs.map((c) => c.seq)),
    onState: (s) => states.push(s),
    options: { pollMs: 1000, readyTimeoutMs: 3000, silenceMs: 20_000, retryStreamMs: [5000, 20_000], maxPollBackoffMs: 8000 },
  };
  const f = new LiveFollower(deps);
  const last = () => streams[streams.length - 1];
  const send = (event: string, data: unknown) => last().h.onEvent({ event, data: JSON.stringify(data), id: null });
  return { f, streams, polls, answers, seen, states, last, send };
}

beforeEach(() => vi.useFakeTimers());
afterEach(() => vi.useRealTimers());

describe('LiveFollower', () => {
  it('follows live once the stream says ready, passes changes on and moves the cursor', async () => {
    const t = harness();
    t.f.start();
    expect(t.f.current.mode).toBe('connecting');
    expect(t.last().path).toBe(`/runs/${RUN}/live?after=0`);
    t.send('ready', { cursor: 0 });
    expect(t.f.current).toEqual({ mode: 'live', note: null });
    t.send('changes', page([3, 4], 4));
    t.send('changes', page([9], 9));
    expect(t.seen).toEqual([3, 4, 9]);
    await vi.advanceTimersByTimeAsync(10_000);
    expect(t.polls).toEqual([]); // no polling while live
    t.f.stop('The run finished.');
    expect(t.last().signal.aborted).toBe(true);
    expect(t.f.current).toEqual({ mode: 'stopped', note: 'The run finished.' });
  });

  it('falls back to polling when the stream cannot be opened, polls from the cursor, and tries the stream again', async () => {
    const t = harness();
    t.f.start();
    t.last().fail(new Error('Failed to fetch'));
    await vi.advanceTimersByTimeAsync(0);
    expect(t.f.current.mode).toBe('polling');
    expect(t.f.current.note).toBe('The live connection could not be opened. Checking every 1 s instead.');
    expect(t.polls).toEqual([`/runs/${RUN}/live?after=0`]);
    t.answers.push(page([5, 6], 6));
    await vi.advanceTimersByTimeAsync(1000);
    expect(t.seen).toEqual([5, 6]);
    await vi.advanceTimersByTimeAsync(1000);
    expect(t.polls.at(-1)).toBe(`/runs/${RUN}/live?after=6`);
    // The retry of the stream (5 s after the failure) starts from the cursor; polling goes on until it is ready.
    await vi.advanceTimersByTimeAsync(3000);
    expect(t.streams).toHaveLength(2);
    expect(t.last().path).toBe(`/runs/${RUN}/live?after=6`);
    expect(t.f.current.mode).toBe('polling');
    t.send('ready', { cursor: 6 });
    expect(t.f.current.mode).toBe('live');
    const pollsAtReady = t.polls.length;
    await vi.advanceTimersByTimeAsync(5000);
    expect(t.polls.length).toBe(pollsAtReady);
  });

  it('takes a stream that never says ready (blocked or buffered) as failed and polls', async () => {
    const t = harness();
    t.f.start();
    await vi.advanceTimersByTimeAsync(2999);
    expect(t.f.current.mode).toBe('connecting');
    await vi.advanceTimersByTimeAsync(1);
    expect(t.f.current.mode).toBe('polling');
    expect(t.f.current.note).toMatch(/did not answer/);
    expect(t.streams[0].signal.aborted).toBe(true);
    expect(t.polls).toHaveLength(1);
  });

  it('takes a silent stream as dead (heartbeats keep it alive) and a closed one as failed', async () => {
    const t = harness();
    t.f.start();
    t.send('ready', { cursor: 0 });
    for (let i = 0; i < 5; i++) {
      await vi.advanceTimersByTimeAsync(15_000);
      t.last().h.onActivity!();
    }
    expect(t.f.current.mode).toBe('live');
    await vi.advanceTimersByTimeAsync(20_000);
    expect(t.f.current.mode).toBe('polling');
    expect(t.f.current.note).toMatch(/went quiet/);

    await vi.advanceTimersByTimeAsync(5000);
    t.send('ready', { cursor: 0 });
    expect(t.f.current.mode).toBe('live');
    t.last().end();
    await vi.advanceTimersByTimeAsync(0);
    expect(t.f.current.mode).toBe('polling');
    expect(t.f.current.note).toMatch(/closed/);
  });

  it('polls only where no stream can be read, and backs off while the server is unreachable', async () => {
    const t = harness({ streamSupported: false });
    t.f.start();
    expect(t.streams).toHaveLength(0);
    expect(t.f.current.mode).toBe('polling');
    t.answers.push(new ApiRequestError(0, 'offline', 'offline'), new ApiRequestError(0, 'offline', 'offline'));
    await vi.advanceTimersByTimeAsync(1000); // first poll answered (empty); the second fails
    expect(t.f.current.note).toMatch(/cannot be reached; trying again in 2 s/);
    await vi.advanceTimersByTimeAsync(2000);
    expect(t.f.current.note).toMatch(/trying again in 4 s/);
    const n = t.polls.length;
    await vi.advanceTimersByTimeAsync(3999);
    expect(t.polls.length).toBe(n);
    await vi.advanceTimersByTimeAsync(1);
    expect(t.polls.length).toBe(n + 1);
    expect(t.f.current.note).toMatch(/cannot keep a live connection/);
    await vi.advanceTimersByTimeAsync(60_000);
    expect(t.streams).toHaveLength(0);
  });

  it('asks again at once while the server says there is more', async () => {
    const t = harness({ streamSupported: false });
    t.answers.push(page([1], 1, true), page([2], 2, true), page([3], 3));
    t.f.start();
    await vi.advanceTimersByTimeAsync(10); // far less than the 1 s between ordinary polls
    expect(t.seen).toEqual([1, 2, 3]);
    expect(t.polls).toHaveLength(3);
  });

  it('stops for good when access ends (401/403/404), on the stream or a poll', async () => {
    const a = harness();
    a.f.start();
    a.last().fail(new ApiRequestError(404, 'not_found', 'Run not found.'));
    await vi.advanceTimersByTimeAsync(0);
    expect(a.f.current).toEqual({ mode: 'stopped', note: 'Run not found.' });
    await vi.advanceTimersByTimeAsync(60_000);
    expect(a.polls).toHaveLength(0);
    expect(a.streams).toHaveLength(1);

    const b = harness({ streamSupported: false });
    b.answers.push(new ApiRequestError(401, 'invalid_token', 'Sign in again.'));
    b.f.start();
    await vi.advanceTimersByTimeAsync(0);
    expect(b.f.current.mode).toBe('stopped');
    await vi.advanceTimersByTimeAsync(60_000);
    expect(b.polls).toHaveLength(1);
  });

  it('after stop nothing more happens: no poll, no retry, no state change', async () => {
    const t = harness();
    t.f.start();
    t.last().fail(new Error('boom'));
    await vi.advanceTimersByTimeAsync(0);
    t.f.stop();
    const states = t.states.length;
    await vi.advanceTimersByTimeAsync(120_000);
    expect(t.polls).toHaveLength(1);
    expect(t.streams).toHaveLength(1);
    expect(t.states.length).toBe(states);
  });
});

describe('coalesce', () => {
  it('runs once more after the run in flight however often it was asked meanwhile', async () => {
    let calls = 0;
    const gates: (() => void)[] = [];
    const task = () => {
      calls++;
      return new Promise<void>((r) => gates.push(r));
    };
    const go = coalesce(task);
    void go();
    void go();
    void go();
    expect(calls).toBe(1);
    gates[0]();
    await vi.advanceTimersByTimeAsync(0);
    expect(calls).toBe(2);
    gates[1]();
    await vi.advanceTimersByTimeAsync(0);
    expect(calls).toBe(2);
    void go();
    expect(calls).toBe(3);
  });

  it('a failing task does not block the next', async () => {
    let calls = 0;
    const go = coalesce(async () => {
      calls++;
      throw new Error('x');
    });
    await go();
    await go();
    expect(calls).toBe(2);
  });
});
