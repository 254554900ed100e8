// Air density and the ISO 4787-form conversion of a weighed mass of water to a volume at 20 °C.
import { type AirConditionsInput } from '../schemas/calibration';
import { waterDensityKgM3 } from './water';

/** Used when the lab does not enter the room's conditions (common practice). */
export const AIR_DEFAULTS = { airPressureHPa: 1013.25, relativeHumidityPct: 50, airTempC: 20 } as const;

/** Density of the balance weights' reference (stainless steel), ISO 4787 form (memory). */
export const REFERENCE_WEIGHT_DENSITY_KG_M3 = 8000;
/** Cubic expansion coefficient of borosilicate 3.3 glass, 1/K (ISO 4787 form, memory). */
export const BOROSILICATE_GAMMA_PER_K = 9.9e-6;

export interface AirConditions {
  airPressureHPa: number;
  relativeHumidityPct: number;
  airTempC: number;
}

/** Fill absent conditions with AIR_DEFAULTS and say which were assumed. */
export function resolveAirConditions(input: AirConditionsInput = {}): { air: AirConditions; defaulted: string[] } {
  const defaulted: string[] = [];
  const pick = <K extends keyof AirConditions>(k: K): number => {
    const v = input[k];
    if (v === undefined) {
      defaulted.push(`${k} = ${AIR_DEFAULTS[k]} (default, common practice)`);
      return AIR_DEFAULTS[k];
    }
    return v;
  };
  return {
    air: { airPressureHPa: pick('airPressureHPa'), relativeHumidityPct: pick('relativeHumidityPct'), airTempC: pick('airTempC') },
    defaulted,
  };
}

/** Air density in kg/m³, OIML R 111 / EURAMET cg-19 approximation (memory):
 * ρA = (0.34848 p − 0.009 RH e^(0.061 t)) / (273.15 + t), p in hPa, RH in %, t in °C. */
export function airDensityKgM3(air: Partial<AirConditions> = {}): number {
  const p = air.airPressureHPa ?? AIR_DEFAULTS.airPressureHPa;
  const rh = air.relativeHumidityPct ?? AIR_DEFAULTS.relativeHumidityPct;
  const t = air.airTempC ?? AIR_DEFAULTS.airTempC;
  return (0.34848 * p - 0.009 * rh * Math.exp(0.061 * t)) / (273.15 + t);
}

/** ISO 4787-form Z factor in mL/g: Z = (1 − ρA/ρB)/(ρW − ρA), water at `waterTempC`. */
export function zFactorMlPerG(waterTempC: number, air: Partial<AirConditions> = {}): number {
  const rhoA = airDensityKgM3(air);
  const rhoW = waterDensityKgM3(waterTempC);
  // (m³/kg) × 1e6 mL/m³ ÷ 1e3 g/kg = ×1000 → mL/g
  return (1000 * (1 - rhoA / REFERENCE_WEIGHT_DENSITY_KG_M3)) / (rhoW - rhoA);
}

/** Volume at 20 °C (mL) of a weighed mass of water (g), ISO 4787 form: V20 = m · Z · [1 − γ (t − 20)]. */
export function massToVolume20Ml(massG: number, waterTempC: number, air: Partial<AirConditions> = {}): number {
  return massG * zFactorMlPerG(waterTempC, air) * (1 - BOROSILICATE_GAMMA_PER_K * (waterTempC - 20));
}
