// Glass-electrode calibration: Nernst slope, IUPAC primary buffer values, 2–3 point fit, acceptance, mV → pH.
import {
  electrodeCalibrationInputSchema,
  electrodeLimitsSchema,
  type ElectrodeCalibrationInput,
  type ElectrodeLimitsInput,
  type IupacBufferId,
} from '../schemas/calibration';
import { CalibrationInputError, parseInput } from './errors';
import { linearFit } from './stats';

// CODATA 2018 (exact in the 2019 SI: R = NA·k, F = NA·e).
export const GAS_CONSTANT_J_PER_MOL_K = 8.314462618;
export const FARADAY_C_PER_MOL = 96485.33212;
const KELVIN_OFFSET = 273.15;

/** Nernst slope RT ln10 / F in mV per pH unit at `tC` °C. */
export function nernstSlopeMvPerPH(tC: number): number {
  return ((1000 * GAS_CONSTANT_J_PER_MOL_K * (tC + KELVIN_OFFSET) * Math.LN10) / FARADAY_C_PER_MOL);
}

interface BufferDef {
  label: string;
  source: string;
  minC: number;
  maxC: number;
  pHAt(tC: number): number;
}

/** Linear interpolation in a table of [t, pH] rows sorted by t. */
const tabulated = (rows: [number, number][]) => (tC: number) => {
  for (let i = 1; i < rows.length; i++) {
    if (tC <= rows[i][0]) {
      const [t0, p0] = rows[i - 1];
      const [t1, p1] = rows[i];
      return p0 + ((p1 - p0) * (tC - t0)) / (t1 - t0);
    }
  }
  return rows[rows.length - 1][1];
};

/** IUPAC primary standards (Buck et al., Pure Appl. Chem. 74 (2002) 2169; values from memory, see check-values.md). */
export const IUPAC_BUFFERS: Record<IupacBufferId, BufferDef> = {
  KHP: {
    label: 'potassium hydrogen phthalate 0.05 mol/kg',
    source: 'Hamer, Pinching & Acree, J. Res. NBS 36 (1946) 47: pH = 4.000 + 0.0000479 (t − 15)²',
    minC: 0,
    maxC: 60,
    pHAt: (t) => 4.0 + 0.0000479 * (t - 15) ** 2,
  },
  phosphate: {
    label: 'KH2PO4 0.025 mol/kg + Na2HPO4 0.025 mol/kg',
    source: 'Buck et al. 2002 (memory), interpolated linearly between 20, 25 and 30 °C',
    minC: 20,
    maxC: 30,
    pHAt: tabulated([[20, 6.881], [25, 6.865], [30, 6.853]]),
  },
  borax: {
    label: 'sodium tetraborate (borax) 0.01 mol/kg',
    source: 'Buck et al. 2002 (memory), interpolated linearly between 20, 25 and 30 °C',
    minC: 20,
    maxC: 30,
    pHAt: tabulated([[20, 9.225], [25, 9.18], [30, 9.139]]),
  },
};

/** pH of an IUPAC primary standard at `tC`; throws RangeError outside the range Halfmark has values for. */
export function iupacBufferPH(buffer: IupacBufferId, tC: number): number {
  const b = IUPAC_BUFFERS[buffer];
  if (!b) throw new RangeError(`unknown buffer ${String(buffer)}`);
  if (!(tC >= b.minC && tC <= b.maxC)) {
    throw new RangeError(
      `no ${buffer} buffer value at ${tC} °C: Halfmark has values for ${b.minC}–${b.maxC} °C; enter the pH from the buffer's certificate`,
    );
  }
  return b.pHAt(tC);
}

export interface ElectrodeLimits {
  minSlopePct: number;
  maxSlopePct: number;
  maxAbsOffsetMv: number;
}
/** Defaults 95–105 % and ±30 mV are common practice, not a standard. */
export const ELECTRODE_DEFAULT_LIMITS: ElectrodeLimits = { minSlopePct: 95, maxSlopePct: 105, maxAbsOffsetMv: 30 };

export interface ElectrodeCalibration {
  temperatureC: number;
  /** Fitted dE/dpH (mV per pH); negative for a normally connected glass electrode. */
  slopeMvPerPH: number;
  /** −slope as % of the Nernst slope at temperatureC. */
  slopePct: number;
  /** Potential at pH 7 (mV). */
  offsetMv: number;
  nernstMvPerPH: number;
  /** Only for 3 or more points (2 points always give 1). */
  r2?: number;
  /** Observed − fitted mV per point, in input order. */
  residualsMv: number[];
  points: { pH: number; mV: number; buffer?: IupacBufferId }[];
  accepted: boolean;
  reasons: string[];
  warnings: string[];
}

/** Decide acceptance of a slope/offset against lab limits (defaults: common practice). */
export function acceptElectrode(
  cal: Pick<ElectrodeCalibration, 'slopePct' | 'offsetMv'>,
  limitsInput?: ElectrodeLimitsInput,
): { accepted: boolean; reasons: string[] } {
  const limits = parseInput(electrodeLimitsSchema, limitsInput ?? {});
  const reasons: string[] = [];
  if (cal.slopePct < 0) {
    reasons.push('potential rises with pH (slope has the wrong sign): check the electrode connection and the buffers');
  } else if (cal.slopePct < limits.minSlopePct || cal.slopePct > limits.maxSlopePct) {
    reasons.push(`slope ${cal.slopePct.toFixed(1)} % is outside ${limits.minSlopePct}–${limits.maxSlopePct} %`);
  }
  if (Math.abs(cal.offsetMv) > limits.maxAbsOffsetMv) {
    reasons.push(`offset ${cal.offsetMv.toFixed(1)} mV at pH 7 is outside ±${limits.maxAbsOffsetMv} mV`);
  }
  return { accepted: reasons.length === 0, reasons };
}

/** Calibrate from 2–5 buffer points at one temperature (least-squares line E = E7 + S (pH − 7)). */
export function calibrateElectrode(input: ElectrodeCalibrationInput): ElectrodeCalibration {
  const v = parseInput(electrodeCalibrationInputSchema, input);
  const issues: string[] = [];
  const points = v.points.map((p, i) => {
    if (p.buffer === undefined) return { pH: p.pH!, mV: p.mV };
    try {
      return { pH: iupacBufferPH(p.buffer, v.temperatureC), mV: p.mV, buffer: p.buffer };
    } catch (e) {
      issues.push(`points.${i}.buffer: ${(e as Error).message}`);
      return { pH: Number.NaN, mV: p.mV };
    }
  });
  for (let i = 0; i < points.length; i++) {
    for (let j = 0; j < i; j++) {
      if (Math.abs(points[i].pH - points[j].pH) < 0.01) {
        issues.push(`points.${i}: same pH as point ${j + 1} (${points[i].pH.toFixed(3)}); buffers must differ`);
      }
    }
  }
  if (issues.length) throw new CalibrationInputError(issues);

  const fit = linearFit(
    points.map((p) => p.pH - 7),
    points.map((p) => p.mV),
  );
  const nernst = nernstSlopeMvPerPH(v.temperatureC);
  const slopePct = (-100 * fit.slope) / nernst;
  const offsetMv = fit.intercept;
  const warnings: string[] = [];
  const pHs = points.map((p) => p.pH);
  if (Math.max(...pHs) - Math.min(...pHs) < 2) {
    warnings.push('buffers span less than 2 pH units: the slope is poorly defined');
  }
  const acceptance = acceptElectrode({ slopePct, offsetMv }, v.limits);
  const cal: ElectrodeCalibration = {
    temperatureC: v.temperatureC,
    slopeMvPerPH: fit.slope,
    slopePct,
    offsetMv,
    nernstMvPerPH: nernst,
    residualsMv: fit.residuals,
    points,
    ...acceptance,
    warnings,
  };
  if (points.length >= 3) cal.r2 = fit.r2;
  return cal;
}

/**
 * pH from a reading in mV with a calibration. At another temperature the slope is scaled by T (Nernst) keeping
 * the calibration's % slope; this assumes the isopotential point is at pH 7, which is only approximately true.
 */
export function mvToPH(
  cal: Pick<ElectrodeCalibration, 'slopeMvPerPH' | 'offsetMv' | 'temperatureC'>,
  mV: number,
  temperatureC: number = cal.temperatureC,
): number {
  if (!Number.isFinite(mV)) throw new RangeError('mV must be a finite number');
  if (cal.slopeMvPerPH === 0) throw new RangeError('calibration slope is zero');
  const slope = (cal.slopeMvPerPH * (temperatureC + KELVIN_OFFSET)) / (cal.temperatureC + KELVIN_OFFSET);
  return 7 + (mV - cal.offsetMv) / slope;
}
