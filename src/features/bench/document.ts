// The run document the engine analyses, built from the setup and the effective local records. Only bookkeeping
// here: which readings count, and burette readings made cumulative across a refill (the engine's delivery map
// wants non-decreasing readings over drip time, and the run clock already leaves the refill pause out).
import type { RunDocumentInput } from '../../../shared/schemas/run-document';
import type { CheckpointRow, ReadingRow, RunEventRow } from '../../local/types';
import type { Effective } from './effective';
import type { RunSetup } from './setup';

export interface Refill {
  /** Drip time (s) at which the drip was stopped. */
  atS: number;
  beforeMl: number;
  afterMl: number;
}

export function refillsOf(events: readonly RunEventRow[]): Refill[] {
  return events
    .filter((e) => e.kind === 'refill' && e.data)
    .map((e) => ({ atS: Number(e.data!.atS), beforeMl: Number(e.data!.beforeMl), afterMl: Number(e.data!.afterMl) }))
    .filter((r) => [r.atS, r.beforeMl, r.afterMl].every(Number.isFinite));
}

export interface BuiltDocument {
  doc: RunDocumentInput | null;
  /** Readings left out, and why; shown under the result. */
  notes: string[];
}

export function buildRunDocument(
  setup: RunSetup,
  readings: readonly Effective<ReadingRow>[],
  checkpoints: readonly Effective<CheckpointRow>[],
  refills: readonly Refill[] = [],
): BuiltDocument {
  const notes: string[] = [];
  const usable: { timeS: number; pH: number }[] = [];
  let mvOnly = 0;
  let sameTime = 0;
  for (const { current: r } of readings) {
    if (r.pH === null) {
      mvOnly++;
      continue;
    }
    if (usable.length && r.timeS <= usable[usable.length - 1].timeS) {
      sameTime++;
      continue;
    }
    usable.push({ timeS: r.timeS, pH: r.pH });
  }
  if (mvOnly) notes.push(`${mvOnly} reading${mvOnly > 1 ? 's' : ''} in mV without an electrode calibration left out (kept in the record).`);
  if (sameTime) notes.push(`${sameTime} reading${sameTime > 1 ? 's' : ''} at the same instant as another left out.`);

  // Burette readings on one cumulative scale: after a refill from `before` to `after`, later readings shift by
  // (before − after) mL, so the scale keeps counting delivered volume.
  const sortedRefills = [...refills].sort((a, b) => a.atS - b.atS);
  const shiftAt = (t: number) => sortedRefills.filter((f) => f.atS <= t).reduce((s, f) => s + (f.beforeMl - f.afterMl), 0);
  const points: { timeS: number; buretteMl: number }[] = [{ timeS: 0, buretteMl: setup.delivery.startBuretteMl }];
  for (const f of sortedRefills) points.push({ timeS: f.atS, buretteMl: f.beforeMl + shiftAt(f.atS - 1e-9) });
  for (const { current: c } of checkpoints) if (c.buretteMl !== null) points.push({ timeS: c.timeS, buretteMl: c.buretteMl + shiftAt(c.timeS) });
  points.sort((a, b) => a.timeS - b.timeS);
  const cps: typeof points = [];
  for (const p of points) {
    if (cps.length && p.timeS <= cps[cps.length - 1].timeS) continue;
    cps.push(p);
  }

  if (!usable.length) return { doc: null, notes: [...notes, 'No readings with a pH yet.'] };
  const doc: RunDocumentInput = {
    label: setup.label,
    sample: { volumeMl: setup.sample.volumeMl, ...(setup.sample.massG !== undefined ? { massG: setup.sample.massG } : {}), ...(setup.sample.acidProtons !== undefined ? { acidProtons: setup.sample.acidProtons } : {}) },
    titrant: { concentrationM: setup.titrant.concentrationM, ...(setup.titrant.uConcentrationM !== undefined ? { uConcentrationM: setup.titrant.uConcentrationM } : {}) },
    ...(setup.temperatureC !== undefined ? { temperatureC: setup.temperatureC } : {}),
    delivery: {
      rateMlPerS: setup.delivery.rateMlPerS,
      ...(setup.delivery.uRateMlPerS !== undefined ? { uRateMlPerS: setup.delivery.uRateMlPerS } : {}),
      ...(setup.delivery.drainVolumeMl !== undefined ? { drainVolumeMl: setup.delivery.drainVolumeMl } : {}),
      checkpoints: cps,
    },
    readings: usable,
  };
  return { doc, notes };
}
