// The plan before a run: the engine's predicted curve at this drip rate, when each break should come, how long to
// run and how often to read. The chemistry is the engine's (simulateCurve); the run time and cadence rules below
// are bench habits, marked as such.
import { equivalenceVolumes, simulateCurve, type SimulatedCurve } from '../../../shared/engine';
import type { RunSetup } from './setup';

/** Run on to 1.5 × the last equivalence volume, so the plateau after the break and a Gran after-branch are read (common practice). */
export const RUN_PAST_LAST_BREAK = 1.5;
/** About 40 readings up to the last break, none closer than 3 s or further than 30 s apart (common practice). */
export const READINGS_TO_BREAK = 40;
export const CADENCE_MIN_S = 3;
export const CADENCE_MAX_S = 30;
/** Near a predicted break (±15 % of its time) read three times as often, at least every 2 s (common practice). */
export const BREAK_WINDOW = 0.15;
export const BREAK_TIGHTEN = 3;
export const CADENCE_NEAR_BREAK_MIN_S = 2;
/** Capacity assumed until the burette calibration says otherwise (a 50 mL burette, common practice). */
export const DEFAULT_BURETTE_CAPACITY_ML = 50;
/** Shape of the planned curve when no pKa is known: a typical carboxylic acid (from memory, for the plan only). */
export const ASSUMED_PKA = 4.8;

export interface RunPlan {
  curve: SimulatedCurve['points'] | null;
  equivalence: { step: number; volumeMl: number; timeS: number }[];
  suggestedTotalS: number;
  cadenceS: number;
  cadenceNearBreakS: number;
  notes: string[];
}

export type PlanResult = { ok: true; plan: RunPlan } | { ok: false; reason: string };

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

export function planRun(setup: RunSetup): PlanResult {
  const { sample, titrant, delivery } = setup;
  let amountMmol: number | undefined;
  if (sample.massG !== undefined && sample.estMolarMassGPerMol !== undefined) amountMmol = (sample.massG / sample.estMolarMassGPerMol) * 1000;
  else if (sample.estConcentrationM !== undefined) amountMmol = sample.estConcentrationM * sample.volumeMl;
  if (amountMmol === undefined) {
    return { ok: false, reason: 'To plan, give the sample mass with an estimated molar mass, or an estimated concentration.' };
  }
  const steps = sample.acidProtons ?? sample.estPKa?.length ?? 1;
  const notes: string[] = [];
  let pKa = sample.estPKa;
  if (!pKa || pKa.length !== steps) {
    if (steps === 1) {
      pKa = [ASSUMED_PKA];
      notes.push(`Curve shape assumes pKa ${ASSUMED_PKA}; enter an estimate for a closer plan. Break times do not depend on it.`);
    } else pKa = undefined;
  }
  const rate = delivery.rateMlPerS;
  const timeFor = (v: number) => {
    if (delivery.drainVolumeMl === undefined) return v / rate;
    const x = 1 - v / (delivery.drainVolumeMl - delivery.startBuretteMl);
    return x > 0 ? (-delivery.drainVolumeMl / rate) * Math.log(x) : Number.POSITIVE_INFINITY;
  };

  let curve: RunPlan['curve'] = null;
  let equivalence: RunPlan['equivalence'];
  try {
    const veq = equivalenceVolumes(amountMmol, titrant.concentrationM, steps);
    equivalence = veq.map((v, i) => ({ step: i + 1, volumeMl: v, timeS: timeFor(v) }));
    if (pKa) {
      const sim = simulateCurve({
        sample: { volumeMl: sample.volumeMl, amountMmol },
        acid: { pKa },
        titrant: { concentrationM: titrant.concentrationM },
        ...(setup.temperatureC !== undefined ? { temperatureC: setup.temperatureC } : {}),
        delivery: { rateMlPerS: rate, startBuretteMl: delivery.startBuretteMl, ...(delivery.drainVolumeMl !== undefined ? { drainVolumeMl: delivery.drainVolumeMl } : {}) },
        maxVolumeMl: RUN_PAST_LAST_BREAK * veq[veq.length - 1],
      });
      curve = sim.points;
    } else notes.push(`Enter ${steps} pKa estimates to draw the predicted curve; break times are shown without it.`);
  } catch (e) {
    return { ok: false, reason: e instanceof Error ? e.message : String(e) };
  }
  const last = equivalence[equivalence.length - 1];
  const totalVolume = RUN_PAST_LAST_BREAK * last.volumeMl;
  const suggestedTotalS = timeFor(totalVolume);
  if (!Number.isFinite(suggestedTotalS) || delivery.startBuretteMl + totalVolume > DEFAULT_BURETTE_CAPACITY_ML) {
    notes.push(`The run needs about ${totalVolume.toFixed(1)} mL from ${delivery.startBuretteMl.toFixed(2)} mL: more than a ${DEFAULT_BURETTE_CAPACITY_ML} mL burette holds. Plan a refill (pause the clock) or use less sample.`);
  }
  const cadenceS = Math.round(clamp(last.timeS / READINGS_TO_BREAK, CADENCE_MIN_S, CADENCE_MAX_S));
  const cadenceNearBreakS = Math.max(CADENCE_NEAR_BREAK_MIN_S, Math.round(cadenceS / BREAK_TIGHTEN));
  const nearBreakGap = (BREAK_WINDOW * 2 * equivalence[0].timeS) / cadenceNearBreakS;
  if (nearBreakGap < 8) notes.push('The drip is fast for timed readings: fewer than 8 readings fall near the first break. Slow the drip for a sharper break.');
  return { ok: true, plan: { curve, equivalence, suggestedTotalS: Number.isFinite(suggestedTotalS) ? suggestedTotalS : totalVolume / rate, cadenceS, cadenceNearBreakS, notes } };
}

/** Seconds to the next cue at drip time `t`: the plan's cadence, tightened within ±15 % of a predicted break. */
export function cueIntervalS(plan: Pick<RunPlan, 'equivalence' | 'cadenceS' | 'cadenceNearBreakS'>, t: number): number {
  const near = plan.equivalence.some((e) => Math.abs(t - e.timeS) <= BREAK_WINDOW * e.timeS);
  return near ? plan.cadenceNearBreakS : plan.cadenceS;
}
