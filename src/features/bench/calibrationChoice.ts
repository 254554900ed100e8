// Which of the lab's calibrations the run setup offers, which one it picks by default, and how a choice fills the
// setup. Pure, so the phone decides the same from a cached overview as from a fresh one. One option per subject
// (titrant lot, drip setting, electrode): the record in force, or when none is, the latest one with why it is not.
import type { CalibrationOverview, DripCalibration, ElectrodeCalibrationRecord, RecordStatus } from '../../../shared/schemas/calibration-api';

/** The record's status now (the overview's may be hours old), plus 'stale': in force but past the lab's age limit. */
export type ChoiceState = RecordStatus | 'stale';

export interface TitrantFill {
  lotId: string;
  standardisationIds: string[];
  concentrationM: number;
  uConcentrationM: number;
  standardisedOn: string;
}
export interface DripFill {
  calibrationId: string;
  rateMlPerS: number;
  uRateMlPerS?: number;
  drainVolumeMl?: number;
}
export interface ElectrodeFill {
  calibrationId: string;
  slopeMvPerPH: number;
  offsetMv: number;
  temperatureC: number;
  calibratedAtMs: number;
}

export interface ChoiceOption<F> {
  id: string;
  label: string;
  /** Numbers and method, as shown under the label. */
  detail: string;
  /** When the record was made (ISO). */
  performedAt: string;
  expiresAt: string;
  state: ChoiceState;
  /** Why it is not fit to use (failed acceptance, withdrawal), empty otherwise. */
  reasons: string[];
  fill: F;
}

export interface CalibrationOptions {
  titrant: ChoiceOption<TitrantFill>[];
  drip: ChoiceOption<DripFill>[];
  electrode: ChoiceOption<ElectrodeFill>[];
}

export const MANUAL = 'manual';
export const NO_ELECTRODE = 'none';
export interface CalibrationChoice {
  /** A lot id or MANUAL. */
  titrant: string;
  /** A drip calibration id or MANUAL. */
  drip: string;
  /** An electrode calibration id, MANUAL or NO_ELECTRODE. */
  electrode: string;
}

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const ms = (iso: string) => Date.parse(iso);

/** Status as of `nowMs`: a record the overview had in force may have expired since, or be past the lab's age limit. */
export function stateAt(status: RecordStatus, performedAt: string, expiresAt: string, nowMs: number, maxAgeMs: number): ChoiceState {
  if (status === 'withdrawn' || status === 'failed' || status === 'expired') return status;
  if (ms(expiresAt) <= nowMs) return 'expired';
  if (nowMs - ms(performedAt) > maxAgeMs) return 'stale';
  return status;
}

const RANK: Record<ChoiceState, number> = { 'in-force': 0, stale: 1, superseded: 2, expired: 3, failed: 4, withdrawn: 5 };
const byState = <F>(a: ChoiceOption<F>, b: ChoiceOption<F>) => RANK[a.state] - RANK[b.state] || ms(b.performedAt) - ms(a.performedAt);

/** The in-force record, else the latest that is not withdrawn. */
function pick<R extends { id: string; status: RecordStatus; performedAt: string }>(records: readonly R[], inForceId: string | null): R | undefined {
  const inForce = inForceId ? records.find((r) => r.id === inForceId) : undefined;
  if (inForce) return inForce;
  return [...records].filter((r) => r.status !== 'withdrawn').sort((a, b) => ms(b.performedAt) - ms(a.performedAt))[0];
}

const sig = (x: number, digits: number) => Number(x.toPrecision(digits)).toString();
export const dateOnly = (iso: string) => new Date(iso).toISOString().slice(0, 10);

export function calibrationOptions(o: CalibrationOverview, nowMs: number): CalibrationOptions {
  const s = o.settings;
  const titrant: ChoiceOption<TitrantFill>[] = [];
  for (const lot of o.lots) {
    if (lot.retired) continue;
    const stds = lot.standardisations;
    if (lot.current) {
      const used = stds.filter((x) => lot.current!.standardisationIds.includes(x.id));
      const latest = used.sort((a, b) => ms(b.performedAt) - ms(a.performedAt))[0];
      const performedAt = latest?.performedAt ?? lot.preparedAt;
      const c = lot.current;
      titrant.push({
        id: lot.id,
        label: `${lot.identifier} (${lot.titrant})`,
        detail: `${c.concentrationM.toFixed(5)} ± ${sig(c.uConcentrationM, 2)} mol/L, ${c.n} standardisation${c.n > 1 ? 's' : ''} (${c.method})`,
        performedAt,
        expiresAt: c.validUntil,
        state: stateAt('in-force', performedAt, c.validUntil, nowMs, s.standardisationMaxAgeDays * DAY),
        reasons: [],
        fill: { lotId: lot.id, standardisationIds: c.standardisationIds, concentrationM: c.concentrationM, uConcentrationM: c.uConcentrationM, standardisedOn: dateOnly(performedAt) },
      });
      continue;
    }
    const r = pick(stds, null);
    if (!r) continue;
    titrant.push({
      id: lot.id,
      label: `${lot.identifier} (${lot.titrant})`,
      detail: `${r.concentrationM.toFixed(5)} ± ${sig(r.uConcentrationM, 2)} mol/L against ${r.standard}`,
      performedAt: r.performedAt,
      expiresAt: r.expiresAt,
      state: stateAt(r.status, r.performedAt, r.expiresAt, nowMs, s.standardisationMaxAgeDays * DAY),
      reasons: r.withdrawnReason ? [r.withdrawnReason] : r.acceptanceReasons,
      fill: { lotId: lot.id, standardisationIds: [r.id], concentrationM: r.concentrationM, uConcentrationM: r.uConcentrationM, standardisedOn: dateOnly(r.performedAt) },
    });
  }

  const drip: ChoiceOption<DripFill>[] = [];
  for (const b of o.burettes) {
    if (b.retired) continue;
    for (const st of b.settings) {
      if (st.retired) continue;
      // A drop count gives drops/min, not a rate: only gravimetric and mark-timing records set the run's rate.
      const rated = st.calibrations.filter((c): c is DripCalibration & { rateMlPerS: number } => c.method !== 'drop-count' && c.rateMlPerS !== null);
      const c = pick(rated, st.inForceId);
      if (!c) continue;
      const drain = c.method === 'mark-timing' && c.drainVolumeMl !== null ? c.drainVolumeMl : undefined;
      drip.push({
        id: c.id,
        label: `${b.identifier} · ${st.stopcockSetting}${st.tip ? ` · ${st.tip}` : ''}`,
        detail:
          `${sig(c.rateMlPerS, 4)}${c.uRateMlPerS !== null ? ` ± ${sig(c.uRateMlPerS, 2)}` : ''} mL/s, ${c.method === 'gravimetric' ? 'gravimetric' : 'mark timing'}` +
          (drain !== undefined ? `, drain volume ${sig(drain, 4)} mL` : ''),
        performedAt: c.performedAt,
        expiresAt: c.expiresAt,
        state: stateAt(c.status, c.performedAt, c.expiresAt, nowMs, s.dripRateMaxAgeDays * DAY),
        reasons: c.withdrawnReason ? [c.withdrawnReason] : c.acceptanceReasons,
        fill: { calibrationId: c.id, rateMlPerS: c.rateMlPerS, ...(c.uRateMlPerS !== null ? { uRateMlPerS: c.uRateMlPerS } : {}), ...(drain !== undefined ? { drainVolumeMl: drain } : {}) },
      });
    }
  }

  const electrode: ChoiceOption<ElectrodeFill>[] = [];
  for (const e of o.electrodes) {
    if (e.retired) continue;
    const c: ElectrodeCalibrationRecord | undefined = pick(e.calibrations, e.inForceId);
    if (!c) continue;
    electrode.push({
      id: c.id,
      label: e.identifier,
      detail: `${c.slopePct.toFixed(1)} % of Nernst (${c.slopeMvPerPH.toFixed(2)} mV/pH), ${c.offsetMv >= 0 ? '+' : ''}${c.offsetMv.toFixed(1)} mV at pH 7, at ${c.temperatureC} °C`,
      performedAt: c.performedAt,
      expiresAt: c.expiresAt,
      state: stateAt(c.status, c.performedAt, c.expiresAt, nowMs, s.electrodeMaxAgeHours * HOUR),
      reasons: c.withdrawnReason ? [c.withdrawnReason] : c.acceptanceReasons,
      fill: { calibrationId: c.id, slopeMvPerPH: c.slopeMvPerPH, offsetMv: c.offsetMv, temperatureC: c.temperatureC, calibratedAtMs: ms(c.performedAt) },
    });
  }

  return { titrant: titrant.sort(byState), drip: drip.sort(byState), electrode: electrode.sort(byState) };
}

const firstInForce = <F>(opts: ChoiceOption<F>[]) => opts.find((x) => x.state === 'in-force')?.id;

/**
 * The choice in effect: what the analyst picked, where it is still offered; otherwise the record in force; otherwise
 * typing by hand (no electrode calibration for the electrode).
 */
export function resolveChoice(picked: Partial<CalibrationChoice>, opts: CalibrationOptions | null): CalibrationChoice {
  const has = <F>(list: ChoiceOption<F>[] | undefined, id: string | undefined) => id !== undefined && (list ?? []).some((x) => x.id === id);
  const one = <F>(list: ChoiceOption<F>[] | undefined, id: string | undefined, fallback: string, own: string[]) =>
    id !== undefined && (own.includes(id) || has(list, id)) ? id : (firstInForce(list ?? []) ?? fallback);
  return {
    titrant: one(opts?.titrant, picked.titrant, MANUAL, [MANUAL]),
    drip: one(opts?.drip, picked.drip, MANUAL, [MANUAL]),
    electrode: one(opts?.electrode, picked.electrode, NO_ELECTRODE, [MANUAL, NO_ELECTRODE]),
  };
}

/** What NewRunScreen builds from its fields (sources 'manual'), before the choice replaces parts of it. */
export interface SetupDraft {
  titrant: Record<string, unknown>;
  delivery: Record<string, unknown> & { startBuretteMl?: unknown };
  electrode?: Record<string, unknown>;
  [k: string]: unknown;
}

/**
 * Replaces the typed titrant, rate and electrode with the chosen records (source 'lab', with their ids, so the run
 * references the calibration it used). The burette start reading stays as typed: it is a reading, not a calibration.
 */
export function applyChoice<D extends SetupDraft>(draft: D, choice: CalibrationChoice, opts: CalibrationOptions | null): D {
  const find = <F>(list: ChoiceOption<F>[] | undefined, id: string) => (list ?? []).find((x) => x.id === id)?.fill;
  const out: D = { ...draft };
  const t = find(opts?.titrant, choice.titrant);
  if (t) out.titrant = { source: 'lab', ...t };
  const d = find(opts?.drip, choice.drip);
  if (d) out.delivery = { source: 'lab', ...d, startBuretteMl: draft.delivery.startBuretteMl };
  const e = find(opts?.electrode, choice.electrode);
  if (e) out.electrode = { source: 'lab', ...e };
  else if (choice.electrode === NO_ELECTRODE) out.electrode = undefined;
  return out;
}

const STATE_WORDS: Record<ChoiceState, string> = {
  'in-force': 'in force',
  superseded: 'superseded by a newer one',
  stale: "older than the lab's limit",
  expired: 'expired',
  failed: 'failed its acceptance',
  withdrawn: 'withdrawn',
};
export const stateWords = (s: ChoiceState) => STATE_WORDS[s];

/**
 * Warnings for chosen records that are not fit to use. The electrode's age is left to setupWarnings (it compares
 * calibratedAtMs with the lab's limit, for typed and chosen calibrations alike).
 */
export function choiceWarnings(choice: CalibrationChoice, opts: CalibrationOptions | null): string[] {
  const w: string[] = [];
  const check = <F>(what: string, list: ChoiceOption<F>[] | undefined, id: string, skip: ChoiceState[] = []) => {
    const o = (list ?? []).find((x) => x.id === id);
    if (!o || o.state === 'in-force' || skip.includes(o.state)) return;
    const why = o.reasons.length ? `: ${o.reasons.join('; ')}` : '';
    w.push(`${what} ${o.label} is ${STATE_WORDS[o.state]} (${dateOnly(o.performedAt)})${why}.`);
  };
  check('Titrant lot', opts?.titrant, choice.titrant);
  check('Drip-rate calibration of', opts?.drip, choice.drip);
  check('Electrode calibration of', opts?.electrode, choice.electrode, ['stale']);
  return w;
}
