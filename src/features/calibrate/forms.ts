// Pure helpers of the Calibrate forms: number entry, the start/stop timer, tap series and the labels of statuses.
import type { RecordStatus } from '../../../shared/schemas/calibration-api';

/** A typed number; a decimal comma is accepted (many bench keyboards), empty is undefined, anything else NaN. */
export function parseDecimal(text: string): number | undefined {
  const t = text.trim().replace(',', '.');
  if (t === '') return undefined;
  return /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t) ? Number(t) : Number.NaN;
}

/** Error for a required positive number field, or null. */
export function positiveError(text: string, what: string): string | null {
  const v = parseDecimal(text);
  if (v === undefined) return `Enter ${what}.`;
  if (!Number.isFinite(v)) return `${what[0].toUpperCase()}${what.slice(1)} must be a number.`;
  if (v <= 0) return `${what[0].toUpperCase()}${what.slice(1)} must be greater than zero.`;
  return null;
}

/** A start/stop timer on a monotonic clock (ms): the delivery time of one gravimetric replicate. */
export type Timer = { startedAt: number | null; stoppedAt: number | null };
export const TIMER_IDLE: Timer = { startedAt: null, stoppedAt: null };
export function pressTimer(t: Timer, nowMs: number): Timer {
  if (t.startedAt === null || t.stoppedAt !== null) return { startedAt: nowMs, stoppedAt: null };
  return { ...t, stoppedAt: nowMs };
}
export function timerSeconds(t: Timer, nowMs: number): number {
  if (t.startedAt === null) return 0;
  return ((t.stoppedAt ?? nowMs) - t.startedAt) / 1000;
}

/** Mark timing: taps are seconds since the first tap, each paired with the graduation the analyst chose. */
export function graduations(fromMl: number, toMl: number, stepMl: number): number[] {
  if (!(stepMl > 0) || !(toMl > fromMl)) return [];
  const n = Math.floor((toMl - fromMl) / stepMl + 1e-9);
  return Array.from({ length: n + 1 }, (_, i) => Math.round((fromMl + i * stepMl) * 1000) / 1000);
}

export const STATUS_LABEL: Record<RecordStatus, { label: string; tone: 'ok' | 'neutral' | 'warn' | 'danger' }> = {
  'in-force': { label: 'In force', tone: 'ok' },
  superseded: { label: 'Superseded', tone: 'neutral' },
  expired: { label: 'Expired', tone: 'warn' },
  failed: { label: 'Failed', tone: 'danger' },
  withdrawn: { label: 'Withdrawn', tone: 'neutral' },
};

/** A value with its standard uncertainty, the value rounded to the uncertainty's second significant digit. */
export function withUncertainty(value: number | null | undefined, u: number | null | undefined, unit: string): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (!u || !Number.isFinite(u) || u <= 0) return `${value.toPrecision(5)} ${unit}`.trim();
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(u)));
  return `${value.toFixed(decimals)} ± ${u.toFixed(decimals)} ${unit}`.trim();
}

export const dateTime = (iso: string) => {
  const d = new Date(iso);
  return `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)}`;
};
