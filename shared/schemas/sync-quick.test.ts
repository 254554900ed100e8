import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ZodError } from 'zod';
import { MAX_BATCH, changeSchema, isQuickChange, parsePayload, parsePushRequest, payloadSchemas, pushRequestSchema, quickChange, quickReadingPayload } from './sync';

// The quick paths of the sync schemas against the schemas themselves (no outside source: the schemas are the
// contract). A quick path may decline anything; what it takes, the schema must take, with the same result.

const DEVICE_MS_MAX = Date.UTC(9999, 11, 31, 23, 59, 59, 999);
const V7 = '01939a2b-7c4d-7e5f-8a6b-1c2d3e4f5a6b';

// Strings near a uuid: valid ones of several versions and cases, the nil and max uuids, and one character changed.
const uuidish = fc.oneof(
  fc.uuid({ version: [1, 2, 3, 4, 5, 6, 7, 8] }),
  fc.uuid({ version: [1, 4, 7] }).map((u) => u.toUpperCase()),
  fc.constantFrom('00000000-0000-0000-0000-000000000000', 'ffffffff-ffff-ffff-ffff-ffffffffffff', V7, `${V7}\u0000`, ` ${V7}`, ''),
  fc.tuple(fc.uuid({ version: [4, 7] }), fc.nat(35), fc.constantFrom('0', '9', 'a', 'F', 'g', '-', 'c', '8', '\u0000')).map(([u, i, ch]) => u.slice(0, i) + ch + u.slice(i + 1)),
  fc.string(),
);
// Numbers at and beside every bound the schemas draw, and the awkward ones.
const bounds = [-2000, -2, 0, 16, 2000, 7 * 24 * 3600, DEVICE_MS_MAX, Number.MAX_SAFE_INTEGER, 1];
const numberish = fc.oneof(
  fc.constantFrom(...bounds.flatMap((b) => [b, b + 1, b - 1, b + 1e-9, b - 1e-9, b + 0.5])),
  fc.constantFrom(Number.NaN, Infinity, -Infinity, -0, Number.MAX_SAFE_INTEGER + 2, Number.MIN_SAFE_INTEGER, 1e300),
  fc.double({ min: -3000, max: 3000 }),
  fc.integer(),
  fc.integer({ min: 0, max: DEVICE_MS_MAX + 10 }),
);
const other = fc.oneof(fc.constant(null), fc.constant(undefined), fc.boolean(), fc.string(), fc.constant({}), fc.constant([]), numberish.map(String));
const value = (main: fc.Arbitrary<unknown>) => fc.oneof({ weight: 6, arbitrary: main }, { weight: 1, arbitrary: other });

// Mostly in range, so that a fair share is valid, with the bounds and the rest mixed in.
const within = (min: number, max: number) => fc.oneof({ weight: 3, arbitrary: fc.double({ min, max, noNaN: true }) }, { weight: 2, arbitrary: numberish });
const readingPayload = fc.record(
  {
    runId: value(uuidish),
    timeS: value(within(0, 7 * 24 * 3600)),
    pH: value(fc.oneof(within(-2, 16), fc.constant(null))),
    mV: value(fc.oneof(within(-2000, 2000), fc.constant(null))),
    extra: other,
  },
  { requiredKeys: ['runId', 'timeS'] },
);
const payload = fc.oneof(readingPayload, other, fc.record({ runId: uuidish, timeS: numberish, buretteMl: numberish }));
const kinds = fc.constantFrom('run', 'reading', 'checkpoint', 'correction', 'run_event', 'run_meta_edit', 'submission', 'mark', 'Reading', '');
const change = fc.record(
  { id: value(uuidish), kind: value(kinds), seq: value(numberish), recordedAt: value(numberish), payload: fc.oneof(payload, fc.constant(undefined)), extra: other },
  { requiredKeys: ['id', 'kind', 'seq', 'recordedAt'] },
);
// Requests mostly well formed (increasing seqs, readings) so that many reach the quick path, with any change mixed in.
const goodReading = fc.record({ id: fc.uuid({ version: 7 }), kind: fc.constant('reading'), seq: fc.nat(1000), recordedAt: fc.integer({ min: 0, max: DEVICE_MS_MAX }), payload: readingPayload });
// Blocks of readings: well formed with values of any kind (judged per reading later), or broken anywhere.
const column = <T>(n: number, item: fc.Arbitrary<T>) => fc.array(item, { minLength: n, maxLength: n });
const goodBlock = fc.tuple(fc.integer({ min: 1, max: 5 }), fc.nat(50)).chain(([n, base]) =>
  fc.record({
    runId: fc.uuid({ version: 7 }),
    ids: column(n, fc.uuid({ version: 7 })),
    seqs: fc.constant(Array.from({ length: n }, (_, i) => 1 + base * 8 + i)),
    recordedAt: column(n, fc.integer({ min: 0, max: DEVICE_MS_MAX })),
    timeS: column(n, value(within(0, 7 * 24 * 3600))),
    pH: column(n, value(fc.oneof(within(-2, 16), fc.constant(null)))),
    mV: column(n, value(fc.oneof(within(-2000, 2000), fc.constant(null)))),
  }),
);
const block = fc.oneof(
  { weight: 4, arbitrary: goodBlock },
  { weight: 1, arbitrary: fc.tuple(goodBlock, fc.constantFrom('runId', 'ids', 'seqs', 'recordedAt', 'timeS', 'pH', 'mV'), fc.oneof(other, fc.array(numberish, { maxLength: 3 }), fc.array(uuidish, { maxLength: 3 }))).map(([b, k, v]) => ({ ...b, [k]: v })) },
  { weight: 1, arbitrary: other },
);
const pushRequest = fc.record(
  {
    deviceId: value(uuidish),
    sentAt: value(numberish),
    changes: fc.oneof(
      fc.array(goodReading, { minLength: 1, maxLength: 8 }).map((cs) => cs.map((c, i) => ({ ...c, seq: (i + 1) * 4 + (c.seq % 4) }))),
      fc.array(fc.oneof(goodReading, change), { minLength: 0, maxLength: 6 }),
      other,
    ),
    readings: fc.oneof(fc.array(block, { maxLength: 3 }), other),
    answer: value(fc.constantFrom('all', 'exceptions', 'some', undefined)),
    extra: other,
  },
  { requiredKeys: ['deviceId', 'sentAt', 'changes'] },
);

/** Checks a quick path against its schema on one input; says whether the quick path took it. */
function agrees<T>(quick: (v: unknown) => T | undefined, schema: { safeParse(v: unknown): { success: boolean; data?: unknown } }, input: unknown): boolean {
  const q = quick(input);
  if (q === undefined) return false;
  const z = schema.safeParse(input);
  expect(z.success, JSON.stringify(input)).toBe(true);
  // Strict: the same keys (defaults present, unknown keys absent), the same values (-0 kept).
  expect(q).toStrictEqual(z.data);
  return true;
}

/** Runs a check on generated input; the comparison means something only if the quick path took a fair share. */
function quickShare<T>(input: fc.Arbitrary<T>, numRuns: number, least: number, check: (v: T) => boolean) {
  let taken = 0;
  fc.assert(
    fc.property(input, (v) => {
      if (check(v)) taken++;
    }),
    { numRuns },
  );
  expect(taken).toBeGreaterThan(least);
}

describe('quick paths of the sync schemas', () => {
  it('a reading payload: takes only what readingPayloadSchema takes, with the same result', () => {
    quickShare(payload, 3000, 50, (p) => {
      // parsePayload answers as the schema does, taken quick or not.
      const via = parsePayload('reading', p);
      const z = payloadSchemas.reading.safeParse(p);
      expect(via.success).toBe(z.success);
      if (z.success) expect(via.data).toStrictEqual(z.data);
      return agrees(quickReadingPayload, payloadSchemas.reading, p);
    });
  });

  it('a change envelope: takes only what changeSchema takes, with the same result', () => {
    // 3,000 took 35–49 (8 runs), near the least share of 30: a run now and then failed on the share alone.
    quickShare(change, 8000, 30, (c) => {
      expect(isQuickChange(c)).toBe(quickChange(c) !== undefined);
      return agrees(quickChange, changeSchema, c);
    });
  });

  it('a push request: parsePushRequest gives what pushRequestSchema.parse gives, or throws its error', () => {
    let withBlocks = 0;
    quickShare(pushRequest, 4000, 40, (req) => {
      const z = pushRequestSchema.safeParse(req);
      if (!z.success) {
        expect(() => parsePushRequest(req)).toThrow(ZodError);
        return false;
      }
      expect(parsePushRequest(req)).toStrictEqual(z.data);
      if (z.data.readings?.length) withBlocks++;
      return z.data.changes.every((c) => quickChange(c));
    });
    // Valid requests with blocks of readings were among them.
    expect(withBlocks).toBeGreaterThan(10);
  });

  it('every field at and beside its bounds, one at a time in an otherwise valid value', () => {
    const candidates: unknown[] = [
      ...bounds.flatMap((b) => [b, -b, b + 1, b - 1, b + 1e-9, b - 1e-9, b + 0.5, b - 0.5]),
      ...[Number.NaN, Infinity, -Infinity, -0, Number.MAX_SAFE_INTEGER + 2, 2 ** 53, 1e300, null, undefined, '7', true, {}, []],
      ...[V7, V7.toUpperCase(), `${V7}\u0000`, V7.slice(1), '00000000-0000-0000-0000-000000000000', '01939a2b-7c4d-0e5f-8a6b-1c2d3e4f5a6b', '01939a2b-7c4d-7e5f-ca6b-1c2d3e4f5a6b'],
      ...['reading', 'run', 'mark', 'all', 'exceptions', 'some'],
    ];
    const sweep = (base: Record<string, unknown>, check: (v: unknown) => void) => {
      for (const key of Object.keys(base)) for (const c of candidates) check({ ...base, [key]: c });
    };
    let taken = 0;
    sweep({ runId: V7, timeS: 1, pH: 7, mV: null }, (p) => void (agrees(quickReadingPayload, payloadSchemas.reading, p) && taken++));
    sweep({ runId: V7, timeS: 1, pH: null, mV: 100 }, (p) => void (agrees(quickReadingPayload, payloadSchemas.reading, p) && taken++));
    sweep({ id: V7, kind: 'reading', seq: 4, recordedAt: 1, payload: {} }, (c) => void (agrees(quickChange, changeSchema, c) && taken++));
    sweep({ deviceId: V7, sentAt: 1, answer: 'exceptions' }, (r) => {
      const req = { ...(r as object), changes: [{ id: V7, kind: 'reading', seq: 4, recordedAt: 1, payload: {} }] };
      const z = pushRequestSchema.safeParse(req);
      if (z.success) expect(parsePushRequest(req)).toStrictEqual(z.data);
      else expect(() => parsePushRequest(req)).toThrow(ZodError);
    });
    expect(taken).toBeGreaterThan(50);
  });

  it('a push request at the batch limits and out of order goes to the schema and fails as it does', () => {
    const reading = (seq: number) => ({ id: crypto.randomUUID(), kind: 'reading', seq, recordedAt: 1, payload: { runId: V7, timeS: 1, pH: 7 } });
    const req = (changes: unknown[]) => ({ deviceId: V7, sentAt: 1, changes });
    expect(parsePushRequest(req(Array.from({ length: MAX_BATCH }, (_, i) => reading(i + 1)))).changes).toHaveLength(MAX_BATCH);
    for (const bad of [[], Array.from({ length: MAX_BATCH + 1 }, (_, i) => reading(i + 1)), [reading(2), reading(2)], [reading(3), reading(2)]]) {
      expect(pushRequestSchema.safeParse(req(bad)).success).toBe(false);
      expect(() => parsePushRequest(req(bad))).toThrow(ZodError);
    }
  });

  it('the change a device makes of a new reading takes the quick paths', () => {
    const c = { id: crypto.randomUUID(), kind: 'reading', seq: 8, recordedAt: Date.now(), payload: { runId: V7, timeS: 12.5, pH: 4.76, mV: null } };
    expect(quickChange(c)).toEqual(c);
    expect(quickReadingPayload(c.payload)).toEqual(c.payload);
  });
});
