// Drop counter: one tap per drop over a timed interval → drops/min; with a gravimetric rate → drop volume.
import { dropCountInputSchema, type DropCountInput } from '../schemas/calibration';
import { parseInput } from './errors';

/** A drop from a burette tip is about 0.05 mL, 20 drops per mL (common practice, not a standard). */
export const TYPICAL_DROP_VOLUME_ML = 0.05;

export interface DropCountResult {
  dropsPerMin: number;
  /** Drops counted as intervals (taps − 1 for tap times). */
  drops: number;
  intervalS: number;
  dropVolumeMl?: number;
  dropsPerMl?: number;
  notes: string[];
}

export function countDrops(input: DropCountInput): DropCountResult {
  const v = parseInput(dropCountInputSchema, input);
  // With tap times, n taps bound n − 1 whole drop intervals; counting the taps would overstate the rate.
  const drops = v.tapTimesS ? v.tapTimesS.length - 1 : v.drops!;
  const intervalS = v.tapTimesS ? v.tapTimesS[v.tapTimesS.length - 1] - v.tapTimesS[0] : v.intervalS!;
  const dropsPerMin = (60 * drops) / intervalS;
  const notes = [`a burette drop is ≈ ${TYPICAL_DROP_VOLUME_ML} mL (20 drops/mL) by common practice`];
  const out: DropCountResult = { dropsPerMin, drops, intervalS, notes };
  if (v.rateMlPerS !== undefined) {
    out.dropVolumeMl = (v.rateMlPerS * 60) / dropsPerMin;
    out.dropsPerMl = 1 / out.dropVolumeMl;
  }
  return out;
}
