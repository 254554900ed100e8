import { describe, expect, it } from 'vitest';
import { createTitrantLotBodySchema } from './calibration-api';
import { runListQuerySchema } from './desk';
import { payloadSchemas, pushRequestSchema } from './sync';

// Inputs the fuzz suite (tests/reliability) found answering 500: valid to the schema, but not storable in PostgreSQL
// (no year 0000, no U+0000 in text, no year after 9999 as a JavaScript Date writes it).
const lot = (preparedAt: string) => createTitrantLotBodySchema.safeParse({ identifier: 'L1', nominalConcentrationM: 0.1, preparedAt }).success;

describe('dates and times the server can store', () => {
  it('a date and time from the year 0001 on, in any offset that keeps it there', () => {
    expect(lot('2026-03-01T09:00:00Z')).toBe(true);
    expect(lot('0001-01-01T00:00:00Z')).toBe(true);
    expect(lot('0000-01-01T00:00:00Z')).toBe(false);
    expect(lot('0001-01-01T00:00:00+14:00')).toBe(false); // 0000-12-31T10:00Z
  });

  it('a runs-list day is a real calendar day from the year 0001 on', () => {
    const day = (from: string) => runListQuerySchema.safeParse({ from }).success;
    expect(day('2024-02-29')).toBe(true);
    expect(day('9999-12-31')).toBe(true);
    for (const bad of ['9999-99-99', '2023-02-29', '2024-13-01', '0000-01-01', '2024-1-01']) expect(day(bad), bad).toBe(false);
  });

  it('a device time after the year 9999 refuses the batch; the last moment of 9999 passes', () => {
    const push = (recordedAt: number) =>
      pushRequestSchema.safeParse({
        deviceId: crypto.randomUUID(),
        sentAt: 1,
        changes: [{ id: crypto.randomUUID(), kind: 'submission', seq: 1, recordedAt, payload: {} }],
      }).success;
    expect(push(Date.parse('9999-12-31T23:59:59.999Z'))).toBe(true);
    expect(push(Date.parse('9999-12-31T23:59:59.999Z') + 1)).toBe(false);
    expect(push(8.64e15)).toBe(false);
    expect(push(Number.MAX_SAFE_INTEGER)).toBe(false);
  });
});

describe('U+0000 in a sync payload', () => {
  it('rejects that payload, in a value, deep inside, or in a key', () => {
    const runId = crypto.randomUUID();
    expect(payloadSchemas.submission.safeParse({ runId, note: 'fine' }).success).toBe(true);
    expect(payloadSchemas.submission.safeParse({ runId, note: 'a\u0000b' }).success).toBe(false);
    const run = (setup: unknown) => payloadSchemas.run.safeParse({ labId: crypto.randomUUID(), sampleName: 'x', setup }).success;
    expect(run({ sample: { name: 'ok' } })).toBe(true);
    expect(run({ sample: { notes: ['ok', 'bad\u0000'] } })).toBe(false);
    expect(run({ 'key\u0000': 1 })).toBe(false);
  });
});
