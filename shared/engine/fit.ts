// Whole-curve weighted least squares of the charge-balance model by Levenberg–Marquardt (Levenberg 1944,
// Marquardt 1963; Nielsen's damping update). Parameters: pKa_1..n, the first equivalence volume Ve1 (mL, the acid
// amount is Cb·Ve1), and optionally an electrode offset (pH). The Jacobian is analytic (implicit differentiation of
// the charge balance and the ionic strength), so each iteration costs one model pass.
import { ChargeBalanceModel } from './model';

export interface FitStart {
  pKa: number[];
  ve1Ml: number;
  offset?: number;
}

export interface FitOutput {
  pKa: number[];
  uPKa: number[];
  ve1Ml: number;
  uVe1Ml: number;
  offset: number | null;
  uOffset: number | null;
  /** parameter covariance, row-major, order pKa..., Ve1, offset? */
  covariance: number[];
  residuals: number[];
  rmse: number;
  weightedCost: number;
  iterations: number;
  converged: boolean;
}

const MAX_P = 6;

/** Effective-variance weights (relative to a pH reading's variance): a tap-timing error δt moves the reading by
 * (dpH/dV)·(dV/dt)·δt, so readings on the steep part of a break weigh less. */
export function effectiveWeights(dpHdV: ArrayLike<number>, rateMlPerS: ArrayLike<number>, uPH: number, uTapS: number): Float64Array {
  const n = dpHdV.length;
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const d = Number.isFinite(dpHdV[i]) ? dpHdV[i] : 0;
    const uv = rateMlPerS[i] * uTapS;
    w[i] = (uPH * uPH) / (uPH * uPH + d * d * uv * uv);
  }
  return w;
}

/** Cholesky solve of (A) x = b for a small symmetric positive-definite A (row-major, size p); false if not SPD. */
function choleskySolve(A: Float64Array, b: Float64Array, x: Float64Array, p: number, L: Float64Array): boolean {
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let s = A[i * p + j];
      for (let k = 0; k < j; k++) s -= L[i * p + k] * L[j * p + k];
      if (i === j) {
        if (!(s > 0)) return false;
        L[i * p + i] = Math.sqrt(s);
      } else L[i * p + j] = s / L[j * p + j];
    }
  }
  for (let i = 0; i < p; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[i * p + k] * x[k];
    x[i] = s / L[i * p + i];
  }
  for (let i = p - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < p; k++) s -= L[k * p + i] * x[k];
    x[i] = s / L[i * p + i];
  }
  return true;
}

function invertSPD(A: Float64Array, p: number): Float64Array | null {
  const L = new Float64Array(p * p);
  const inv = new Float64Array(p * p);
  const e = new Float64Array(p);
  const col = new Float64Array(p);
  for (let c = 0; c < p; c++) {
    e.fill(0);
    e[c] = 1;
    if (!choleskySolve(A, e, col, p, L)) return null;
    for (let r = 0; r < p; r++) inv[r * p + c] = col[r];
  }
  return inv;
}

/**
 * Fit the model to (V, pH) with weights w (1/variance up to a common factor). Deterministic: fixed start, fixed
 * rules, no randomness.
 */
export function fitCurve(
  model: ChargeBalanceModel,
  V: ArrayLike<number>,
  pH: ArrayLike<number>,
  w: ArrayLike<number>,
  start: FitStart,
  opts: { fitOffset?: boolean; maxIterations?: number } = {},
): FitOutput {
  const N = V.length;
  const n = start.pKa.length;
  const fitOffset = !!opts.fitOffset;
  const P = n + 1 + (fitOffset ? 1 : 0);
  if (P > MAX_P) throw new RangeError('too many fit parameters');
  const Cb = model.Cb;
  const p = new Float64Array(P);
  for (let j = 0; j < n; j++) p[j] = start.pKa[j];
  p[n] = start.ve1Ml;
  if (fitOffset) p[n + 1] = start.offset ?? 0;
  const trial = new Float64Array(P);
  const J = new Float64Array(N * P);
  const r = new Float64Array(N);
  const rTrial = new Float64Array(N);
  const sw = new Float64Array(N);
  for (let i = 0; i < N; i++) sw[i] = Math.sqrt(w[i]);
  const JtJ = new Float64Array(P * P);
  const A = new Float64Array(P * P);
  const g = new Float64Array(P);
  const step = new Float64Array(P);
  const L = new Float64Array(P * P);
  const pk = new Float64Array(n);
  const grad = new Float64Array(n + 1);

  /** weighted residuals into `out` (and Jacobian when `jac`); returns the cost ½Σ(w r²). */
  const evaluate = (par: Float64Array, out: Float64Array, jac: boolean): number => {
    for (let j = 0; j < n; j++) pk[j] = par[j];
    model.setPKa(pk);
    const amount = Cb * par[n];
    const off = fitOffset ? par[n + 1] : 0;
    let cost = 0;
    for (let i = 0; i < N; i++) {
      const ri = (model.pHAt(V[i], amount, off, i) - pH[i]) * sw[i];
      out[i] = ri;
      cost += ri * ri;
      if (jac) {
        const row = i * P;
        model.gradient(V[i], grad);
        for (let k = 0; k < n; k++) J[row + k] = grad[k] * sw[i];
        J[row + n] = grad[n] * Cb * sw[i];
        if (fitOffset) J[row + n + 1] = sw[i];
      }
    }
    return 0.5 * cost;
  };

  const normal = () => {
    JtJ.fill(0);
    g.fill(0);
    for (let i = 0; i < N; i++) {
      const row = i * P;
      for (let a = 0; a < P; a++) {
        const ja = J[row + a];
        g[a] += ja * r[i];
        for (let b = 0; b <= a; b++) JtJ[a * P + b] += ja * J[row + b];
      }
    }
    for (let a = 0; a < P; a++) for (let b = 0; b < a; b++) JtJ[b * P + a] = JtJ[a * P + b];
  };

  model.resetWarmStarts();
  let cost = evaluate(p, r, true);
  normal();
  let mu = 0;
  for (let a = 0; a < P; a++) mu = Math.max(mu, JtJ[a * P + a]);
  mu *= 1e-3;
  let nu = 2;
  const maxIt = opts.maxIterations ?? 200;
  let it = 0;
  let converged = false;
  for (; it < maxIt; it++) {
    let gmax = 0;
    for (let a = 0; a < P; a++) gmax = Math.max(gmax, Math.abs(g[a]));
    if (gmax < 1e-15) { converged = true; break; }
    for (let a = 0; a < P * P; a++) A[a] = JtJ[a];
    // Marquardt's scaling: damp each parameter by its own curvature
    for (let a = 0; a < P; a++) A[a * P + a] += mu * Math.max(JtJ[a * P + a], 1e-300);
    for (let a = 0; a < P; a++) g[a] = -g[a];
    const ok = choleskySolve(A, g, step, P, L);
    for (let a = 0; a < P; a++) g[a] = -g[a];
    if (!ok) { mu *= nu; nu *= 2; continue; }
    let small = true;
    for (let a = 0; a < P; a++) {
      trial[a] = p[a] + step[a];
      if (Math.abs(step[a]) > 1e-10 * (Math.abs(p[a]) + 1e-9)) small = false;
    }
    if (small) { converged = true; break; }
    let valid = trial[n] > 0;
    for (let j = 0; j < n; j++) if (!(trial[j] > -4 && trial[j] < 18)) valid = false;
    const newCost = valid ? evaluate(trial, rTrial, false) : Infinity;
    // predicted reduction of the quadratic model: −gᵀs − ½ sᵀJᵀJs = ½ sᵀ(μD s − g)
    let pred = 0;
    for (let a = 0; a < P; a++) pred += 0.5 * step[a] * (mu * Math.max(JtJ[a * P + a], 1e-300) * step[a] - g[a]);
    // nothing left to gain beyond rounding: the quadratic model itself promises less than 1e-12 of the cost
    if (pred <= 1e-12 * cost) { converged = true; break; }
    const rho = (cost - newCost) / pred;
    if (newCost < cost && rho > 0) {
      const rel = (cost - newCost) / Math.max(cost, 1e-300);
      for (let a = 0; a < P; a++) p[a] = trial[a];
      cost = evaluate(p, r, true);
      normal();
      mu *= Math.max(1 / 3, 1 - Math.pow(2 * rho - 1, 3));
      nu = 2;
      if (rel < 1e-10) { converged = true; it++; break; }
    } else {
      mu *= nu;
      nu *= 2;
      if (mu > 1e30) break;
    }
  }

  // final residuals in pH units and the covariance s²(JᵀWJ)⁻¹
  for (let j = 0; j < n; j++) pk[j] = p[j];
  model.setPKa(pk);
  const residuals: number[] = new Array(N);
  let ss = 0;
  for (let i = 0; i < N; i++) {
    const ri = model.pHAt(V[i], Cb * p[n], fitOffset ? p[n + 1] : 0, i) - pH[i];
    residuals[i] = ri;
    ss += ri * ri;
  }
  const dof = Math.max(1, N - P);
  const s2 = (2 * cost) / dof;
  const inv = invertSPD(JtJ, P);
  const cov: number[] = new Array(P * P).fill(NaN);
  if (inv) for (let a = 0; a < P * P; a++) cov[a] = inv[a] * s2;
  const u = (k: number) => Math.sqrt(cov[k * P + k]);
  return {
    pKa: Array.from(p.subarray(0, n)),
    uPKa: Array.from({ length: n }, (_, k) => u(k)),
    ve1Ml: p[n],
    uVe1Ml: u(n),
    offset: fitOffset ? p[n + 1] : null,
    uOffset: fitOffset ? u(n + 1) : null,
    covariance: cov,
    residuals,
    rmse: Math.sqrt(ss / N),
    weightedCost: cost,
    iterations: it,
    converged,
  };
}
