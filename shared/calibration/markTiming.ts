// Mark-timing calibration of a gravity burette's drain: the analyst taps as the meniscus passes chosen graduations.
// Model (flow proportional to head, i.e. a laminar-resistance tip), in burette readings B (mL below the zero mark),
// the convention of shared/engine/delivery.ts: dB/dt = q0 (1 − B/Vh), so from the first tapped mark (t1, B1)
// B(t) = Vh − (Vh − B1) e^(−k (t − t1)), k = q0/Vh. Fitted by Levenberg–Marquardt (1944/1963).
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { markTimingInputSchema, type MarkTimingInput } from '../schemas/calibration';
import { parseInput } from './errors';

export interface MarkTimingResult {
  model: 'drain' | 'constant';
  /** q0: flow at burette reading 0 mL (mL/s); the constant rate for 'constant'. */
  q0MlPerS: number;
  uQ0: number;
  /** Vh: the burette reading at which the flow would stop (mL); null for 'constant'. */
  drainVolumeMl: number | null;
  uVh: number | null;
  /** Flow at the first and last tapped marks (mL/s). */
  rateTopMlPerS: number;
  rateBottomMlPerS: number;
  /** Ready for a run document's `delivery` (shared/schemas/run-document.ts). */
  delivery: { rateMlPerS: number; uRateMlPerS: number; drainVolumeMl?: number };
  /** How much the rate falls from the first to the last tapped mark, % of the first. */
  dropPct: number;
  /** Observed − fitted delivered volume at each point, in input order (the first, the reference, is 0). */
  residuals: number[];
  rmseMl: number;
  notes: string[];
}

/** g(k, x) = (1 − e^(−kx))/k, → x as k → 0; the delivered volume is q0·g. */
function g(k: number, x: number): number {
  const kx = k * x;
  return Math.abs(kx) < 1e-4 ? x * (1 - kx / 2 + (kx * kx) / 6) : -Math.expm1(-kx) / k;
}
function dgdk(k: number, x: number): number {
  const kx = k * x;
  if (Math.abs(kx) < 1e-4) return x * x * (-0.5 + kx / 3);
  return (x * Math.exp(-kx)) / k + Math.expm1(-kx) / (k * k);
}

/** Inverse of a symmetric 2×2 matrix [[a, b], [b, d]]; null if singular. */
function inv2(a: number, b: number, d: number): [number, number, number] | null {
  const det = a * d - b * b;
  if (!(Math.abs(det) > 1e-300)) return null;
  return [d / det, -b / det, a / det];
}

type FitCore = Omit<MarkTimingResult, 'residuals' | 'rmseMl' | 'delivery'> & { fit: (t: number) => number };

function constantRate(x: number[], y: number[], notes: string[]): FitCore {
  // Line through the reference point: q = Σxy / Σx², u(q) = s/√Σx².
  const sxx = x.reduce((s, v) => s + v * v, 0);
  const q = x.reduce((s, v, i) => s + v * y[i], 0) / sxx;
  const ssr = x.reduce((s, v, i) => s + (y[i] - q * v) ** 2, 0);
  const uQ = Math.sqrt(ssr / Math.max(1, x.length - 1) / sxx);
  return {
    model: 'constant', q0MlPerS: q, uQ0: uQ, drainVolumeMl: null, uVh: null,
    rateTopMlPerS: q, rateBottomMlPerS: q, dropPct: 0, notes, fit: (t) => q * t,
  };
}

/** Fit the drain model to mark-timing taps `{timeS, buretteMl}[]` (the first point is the reference; ≥ 4 points). */
export function fitBuretteDrain(input: MarkTimingInput): MarkTimingResult {
  const { points } = parseInput(markTimingInputSchema, input);
  const t0 = points[0].timeS;
  const v0 = points[0].buretteMl;
  const x = points.slice(1).map((p) => p.timeS - t0);
  const y = points.slice(1).map((p) => p.buretteMl - v0);
  const m = x.length;
  const T = x[m - 1];
  const Y = y[m - 1];

  // Start from a quadratic through the origin, y ≈ q0 x − (q0 k / 2) x².
  let s2 = 0, s3 = 0, s4 = 0, sy1 = 0, sy2 = 0;
  x.forEach((xi, i) => {
    s2 += xi ** 2; s3 += xi ** 3; s4 += xi ** 4; sy1 += xi * y[i]; sy2 += xi * xi * y[i];
  });
  const det = s2 * s4 - s3 * s3;
  const aq = (sy1 * s4 - sy2 * s3) / det;
  const cq = (s2 * sy2 - s3 * sy1) / det;
  const qInit = aq > 0 ? aq : Y / T;
  const kInit = aq > 0 && cq < 0 ? Math.min((-2 * cq) / aq, 5 / T) : 0.01 / T;

  // Fit in scaled units (X = x/T, Y = y/Ymax) so both parameters are of order 1 for the damping.
  const fitted = levenbergMarquardt(
    { x: x.map((v) => v / T), y: y.map((v) => v / Y) },
    ([a, b]) => (X) => a * g(b, X),
    {
      initialValues: [(qInit * T) / Y, kInit * T],
      jacobianFunction: ([a, b]) => (X) => [g(b, X), a * dgdk(b, X)],
      minValues: [1e-6, -20],
      maxValues: [1e3, 200],
      damping: 1e-2,
      maxIterations: 300,
      errorTolerance: 1e-16,
    },
  );
  // Rate at the first mark and k = q0/Vh; shifted to the burette-reading convention at the end.
  const q0 = (fitted.parameterValues[0] * Y) / T;
  const k = fitted.parameterValues[1] / T;

  const notes: string[] = [];
  const residualsOf = (f: (t: number) => number) => [0, ...x.map((xi, i) => y[i] - f(xi))];
  const finish = (r: FitCore): MarkTimingResult => {
    const { fit, ...rest } = r;
    const residuals = residualsOf(fit);
    const rmseMl = Math.sqrt(residuals.slice(1).reduce((s, e) => s + e * e, 0) / m);
    const delivery: MarkTimingResult['delivery'] = { rateMlPerS: r.q0MlPerS, uRateMlPerS: r.uQ0 };
    if (r.drainVolumeMl !== null) delivery.drainVolumeMl = r.drainVolumeMl;
    return { ...rest, delivery, residuals, rmseMl };
  };

  if (!Number.isFinite(q0) || !Number.isFinite(k)) {
    notes.push('the drain-model fit did not converge; constant rate fitted instead');
    return finish(constantRate(x, y, notes));
  }

  const dof = m - 2;
  const ssr = x.reduce((s, xi, i) => s + (y[i] - q0 * g(k, xi)) ** 2, 0);
  let jqq = 0, jqk = 0, jkk = 0;
  x.forEach((xi) => {
    const jq = g(k, xi);
    const jk = q0 * dgdk(k, xi);
    jqq += jq * jq; jqk += jq * jk; jkk += jk * jk;
  });
  const cov = inv2(jqq, jqk, jkk);
  const sig2 = dof > 0 ? ssr / dof : 0;
  const uQ = cov ? Math.sqrt(sig2 * cov[0]) : Number.NaN;
  const uK = cov ? Math.sqrt(sig2 * cov[2]) : Number.NaN;
  const cQK = cov ? sig2 * cov[1] : Number.NaN;

  // The drop is "resolved" when k > 0 by more than twice its standard uncertainty (≈95 %).
  if (!(k > 0) || !(k > 2 * uK)) {
    notes.push(
      k > 0
        ? 'the fall of rate with delivered volume is not resolved by these taps (k < 2 u(k)); constant rate fitted instead'
        : 'the taps show no fall of rate with delivered volume; constant rate fitted instead',
    );
    return finish(constantRate(x, y, notes));
  }

  // From the first mark the drain has q0/k mL left to run, so Vh (reading) = B1 + q0/k and the flow at reading 0
  // is k·Vh = q0 + k·B1; u by first-order propagation with the fit's covariance.
  const vhFromMark = q0 / k;
  const uVh = Math.abs(vhFromMark) * Math.sqrt(Math.max(0, (uQ / q0) ** 2 + (uK / k) ** 2 - (2 * cQK) / (q0 * k)));
  const qZero = q0 + k * v0;
  const uQZero = Math.sqrt(Math.max(0, uQ * uQ + v0 * v0 * uK * uK + 2 * v0 * cQK));
  const rateBottom = q0 * Math.exp(-k * T); // = q0 (1 − delivered/vhFromMark)
  return finish({
    model: 'drain',
    q0MlPerS: qZero,
    uQ0: uQZero,
    drainVolumeMl: v0 + vhFromMark,
    uVh,
    rateTopMlPerS: q0,
    rateBottomMlPerS: rateBottom,
    dropPct: 100 * (1 - rateBottom / q0),
    notes,
    fit: (t) => q0 * g(k, t),
  });
}

/** Flow (mL/s) at burette reading `buretteMl`, from a mark-timing fit. */
export function drainRateAt(fit: Pick<MarkTimingResult, 'q0MlPerS' | 'drainVolumeMl'>, buretteMl: number): number {
  return fit.drainVolumeMl === null ? fit.q0MlPerS : fit.q0MlPerS * (1 - buretteMl / fit.drainVolumeMl);
}
