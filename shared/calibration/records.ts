// Which stored calibration is in force, and a lot's concentration from its replicate standardisations.
// Pure, so the phone decides the same offline as the server does online.
import type { RecordStatus } from '../schemas/calibration-api';
import { mean, sampleSd } from './stats';

export interface StatusInput {
  id: string;
  performedAt: string | Date;
  expiresAt: string | Date;
  accepted: boolean;
  withdrawnAt: string | Date | null;
  /** Breaks ties of performedAt (two records made in the same second): the later-stored one wins. */
  createdAt?: string | Date;
  /** Records that cannot be used as a rate (a drop count without a gravimetric rate) never come into force. */
  usable?: boolean;
}

const ms = (d: string | Date) => (typeof d === 'string' ? Date.parse(d) : d.getTime());

/**
 * Status of each record of one subject (a drip setting, an electrode, a lot): the latest accepted, unexpired,
 * not withdrawn one is in force; older accepted ones that are still valid are superseded (kept for history and for
 * runs that used them). Ties on performedAt go to the later createdAt, then the larger id (only to be deterministic).
 */
export function recordStatuses(records: readonly StatusInput[], now: Date): { statuses: Map<string, RecordStatus>; inForceId: string | null } {
  const t = now.getTime();
  const statuses = new Map<string, RecordStatus>();
  const candidates: StatusInput[] = [];
  for (const r of records) {
    if (r.withdrawnAt) statuses.set(r.id, 'withdrawn');
    else if (!r.accepted || r.usable === false) statuses.set(r.id, 'failed');
    else if (ms(r.expiresAt) <= t) statuses.set(r.id, 'expired');
    else candidates.push(r);
  }
  const created = (r: StatusInput) => (r.createdAt ? ms(r.createdAt) : 0);
  candidates.sort((a, b) => ms(b.performedAt) - ms(a.performedAt) || created(b) - created(a) || (a.id < b.id ? 1 : -1));
  const inForce = candidates[0];
  for (const c of candidates) statuses.set(c.id, c === inForce ? 'in-force' : 'superseded');
  return { statuses, inForceId: inForce?.id ?? null };
}

export interface ReplicateStandardisation {
  id: string;
  concentrationM: number;
  uConcentrationM: number;
  /** Relative standard uncertainties that replicates share and that do not average out (purity, molar mass). */
  uSharedRel: number;
  expiresAt: string | Date;
}

export interface CombinedConcentration {
  concentrationM: number;
  uConcentrationM: number;
  n: number;
  sdM: number | null;
  standardisationIds: string[];
  validUntil: string;
  method: string;
}

/**
 * Combines replicate standardisations of one lot (GUM, JCGM 100:2008): the mean, with
 * u² = u_shared² + u_random², where u_shared (purity of the standard, its molar mass) is common to every replicate
 * and does not average out, and u_random is the larger of s/√n (the observed scatter, type A) and the replicates'
 * own random u (mass, volume, repeatability) divided by √n, so a chance agreement of two replicates cannot shrink u
 * below what each one's budget supports. One replicate: its own u.
 */
export function combineStandardisations(reps: readonly ReplicateStandardisation[]): CombinedConcentration | null {
  if (reps.length === 0) return null;
  const validUntil = new Date(Math.min(...reps.map((r) => ms(r.expiresAt)))).toISOString();
  const ids = reps.map((r) => r.id);
  if (reps.length === 1) {
    const r = reps[0];
    return {
      concentrationM: r.concentrationM,
      uConcentrationM: r.uConcentrationM,
      n: 1,
      sdM: null,
      standardisationIds: ids,
      validUntil,
      method: 'one standardisation: its own GUM budget',
    };
  }
  const n = reps.length;
  const c = mean(reps.map((r) => r.concentrationM));
  const sd = sampleSd(reps.map((r) => r.concentrationM))!;
  const uShared = c * Math.sqrt(mean(reps.map((r) => r.uSharedRel ** 2)));
  const ownRandom = Math.sqrt(
    mean(reps.map((r) => Math.max(0, r.uConcentrationM ** 2 - (r.concentrationM * r.uSharedRel) ** 2))),
  );
  const uRandom = Math.max(sd, ownRandom) / Math.sqrt(n);
  return {
    concentrationM: c,
    uConcentrationM: Math.hypot(uShared, uRandom),
    n,
    sdM: sd,
    standardisationIds: ids,
    validUntil,
    method: `mean of ${n} standardisations; u² = u(purity, M)² + max(s, u_random)²/n (GUM)`,
  };
}
