import { describe, expect, it } from 'vitest';
import { clockOffsetText, describeSync } from './describe';
import type { SyncStatus } from './engine';

const base: SyncStatus = { state: 'synced', waiting: 0, rejected: 0, lastSyncedAt: 1, message: null, clockOffsetMs: 0, clockFlagged: false };

describe('clockOffsetText', () => {
  it('says how far and which way a device clock was off (common practice: round to the unit a reader takes in)', () => {
    expect(clockOffsetText(3 * 86_400_000 + 120_000)).toBe("about 3 days ahead of the server's");
    expect(clockOffsetText(-2 * 3_600_000)).toBe("about 2 h behind the server's");
    expect(clockOffsetText(-20 * 60_000)).toBe("about 20 min behind the server's");
    expect(clockOffsetText(61 * 60_000)).toBe("about 61 min ahead of the server's");
    expect(clockOffsetText(20_000)).toBe("about 1 min ahead of the server's");
  });
});


describe('describeSync', () => {
  it("says all synced, and adds a warning when the server found this device's clock far off", () => {
    expect(describeSync(base, true)).toEqual({ label: 'All synced', tone: 'ok' });
    expect(describeSync({ ...base, clockOffsetMs: 3 * 86_400_000, clockFlagged: true }, true)).toEqual({ label: 'All synced · clock off', tone: 'warn' });
    expect(describeSync({ ...base, state: 'waiting', waiting: 2, rejected: 1, clockFlagged: true }, true)).toEqual({ label: '2 waiting · 1 rejected · clock off', tone: 'danger' });
  });
});
