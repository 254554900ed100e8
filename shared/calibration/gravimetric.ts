// Gravimetric calibration of a drip setting: weigh what drips in a tapped time, turn mass into volume at 20 °C.
import { gravimetricInputSchema, type GravimetricInput } from '../schemas/calibration';
import { massToVolume20Ml, resolveAirConditions, zFactorMlPerG } from './air';
import { parseInput } from './errors';
import { mean, sampleSd } from './stats';
import { waterDensityWarning } from './water';

/** Standard uncertainties used when the lab gives none (common practice, not from a standard). */
export const GRAVIMETRIC_DEFAULTS = { uMassG: 0.001, uDurationS: 0.1 } as const;

export interface GravimetricReplicateResult {
  massG: number;
  durationS: number;
  waterTempC: number;
  zFactorMlPerG: number;
  volumeMl: number;
  rateMlPerS: number;
  /** From the balance and timing uncertainties of this replicate only. */
  uRateMlPerS: number;
}

export interface GravimetricResult {
  /** Mean rate over the replicates (mL/s, volumes at 20 °C). */
  rateMlPerS: number;
  uRateMlPerS: number;
  /** Mean delivered volume at 20 °C (mL). */
  volumeMl: number;
  n: number;
  sdRateMlPerS?: number;
  relSdPct?: number;
  replicates: GravimetricReplicateResult[];
  /** Defaults that were assumed and how the uncertainty was formed. */
  assumptions: string[];
  warnings: string[];
}

/**
 * Gravimetric drip rate from one delivery or an array of replicates.
 * Volume: ISO 4787 form V20 = m·Z·[1 − γ(t − 20)] (the burette scale's 20 °C convention).
 * Uncertainty: each replicate's u from balance and timing (GUM, JCGM 100:2008, first-order propagation of r = V/t);
 * with n ≥ 2, u² = s²/n + ū², where ū is the RMS of the replicates' balance/timing u, kept at full size because
 * a balance bias and a habitual tap lag do not average out.
 */
export function gravimetricDripRate(input: GravimetricInput): GravimetricResult {
  const parsed = parseInput(gravimetricInputSchema, input);
  const list = Array.isArray(parsed) ? parsed : [parsed];
  const assumptions = new Set<string>();
  const warnings = new Set<string>();

  const replicates = list.map((r): GravimetricReplicateResult => {
    const { air, defaulted } = resolveAirConditions(r);
    defaulted.forEach((d) => assumptions.add(d));
    const w = waterDensityWarning(r.waterTempC);
    if (w) warnings.add(w);
    const uMassG = r.uMassG ?? GRAVIMETRIC_DEFAULTS.uMassG;
    const uDurationS = r.uDurationS ?? GRAVIMETRIC_DEFAULTS.uDurationS;
    if (r.uMassG === undefined) assumptions.add(`uMassG = ${uMassG} g (balance, default, common practice)`);
    if (r.uDurationS === undefined) assumptions.add(`uDurationS = ${uDurationS} s (tap timing, default, common practice)`);

    const z = zFactorMlPerG(r.waterTempC, air);
    const volumeMl = massToVolume20Ml(r.massG, r.waterTempC, air);
    const rate = volumeMl / r.durationS;
    const uVol = (volumeMl / r.massG) * uMassG;
    const uRate = Math.hypot(uVol / r.durationS, (rate * uDurationS) / r.durationS);
    return { massG: r.massG, durationS: r.durationS, waterTempC: r.waterTempC, zFactorMlPerG: z, volumeMl, rateMlPerS: rate, uRateMlPerS: uRate };
  });

  const rates = replicates.map((r) => r.rateMlPerS);
  const n = replicates.length;
  const rateMlPerS = mean(rates);
  const uInstr = Math.sqrt(mean(replicates.map((r) => r.uRateMlPerS ** 2)));
  const sd = sampleSd(rates);
  const result: GravimetricResult = {
    rateMlPerS,
    uRateMlPerS: sd === undefined ? uInstr : Math.sqrt((sd * sd) / n + uInstr * uInstr),
    volumeMl: mean(replicates.map((r) => r.volumeMl)),
    n,
    replicates,
    assumptions: [
      ...assumptions,
      n >= 2
        ? 'u = √(s²/n + balance/timing u²) (GUM combination)'
        : 'single delivery: u from balance and timing only, no repeatability',
    ],
    warnings: [...warnings],
  };
  if (sd !== undefined) {
    result.sdRateMlPerS = sd;
    result.relSdPct = (100 * sd) / rateMlPerS;
  }
  return result;
}

export interface AcceptanceResult {
  accepted: boolean;
  reasons: string[];
}

/** Acceptance of a gravimetric calibration: relative SD of the replicate rates within the lab's limit (in %). */
export function checkRepeatability(
  result: Pick<GravimetricResult, 'n' | 'relSdPct'>,
  limits: { maxRelSdPct: number; minReplicates?: number },
): AcceptanceResult {
  if (!(limits.maxRelSdPct > 0)) throw new RangeError('maxRelSdPct must be greater than zero');
  const minN = Math.max(2, limits.minReplicates ?? 2);
  const reasons: string[] = [];
  if (result.n < minN || result.relSdPct === undefined) {
    reasons.push(`repeatability needs at least ${minN} deliveries (have ${result.n})`);
  } else if (result.relSdPct > limits.maxRelSdPct) {
    reasons.push(
      `relative SD ${result.relSdPct.toFixed(2)} % exceeds the lab limit ${limits.maxRelSdPct} %`,
    );
  }
  return { accepted: reasons.length === 0, reasons };
}
