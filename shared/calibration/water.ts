// Density of air-free water, Tanaka et al., Metrologia 38 (2001) 301.
import { TEMPERATURE_MAX_C, TEMPERATURE_MIN_C } from '../schemas/calibration';

const A1 = -3.983035; // °C
const A2 = 301.797; // °C
const A3 = 522528.9; // °C²
const A4 = 69.34881; // °C
const A5 = 999.97495; // kg/m³

/** Tanaka's fit covers 0–40 °C (from memory); beyond it up to 60 °C we still compute but warn. */
export const TANAKA_VALID_MAX_C = 40;

/** Density of air-free water at `tC` (°C, ITS-90) in kg/m³. Throws RangeError outside 0–60 °C. */
export function waterDensityKgM3(tC: number): number {
  if (!Number.isFinite(tC) || tC < TEMPERATURE_MIN_C || tC > TEMPERATURE_MAX_C) {
    throw new RangeError(`water temperature ${tC} °C is outside ${TEMPERATURE_MIN_C}–${TEMPERATURE_MAX_C} °C`);
  }
  return A5 * (1 - ((tC + A1) ** 2 * (tC + A2)) / (A3 * (tC + A4)));
}

/** A warning when `tC` is beyond the range Tanaka et al. fitted, else undefined. */
export function waterDensityWarning(tC: number): string | undefined {
  return tC > TANAKA_VALID_MAX_C
    ? `water at ${tC} °C is above the 0–${TANAKA_VALID_MAX_C} °C range of the Tanaka (2001) density formula; extrapolated`
    : undefined;
}
