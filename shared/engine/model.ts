// Exact charge-balance model of a polyprotic weak acid HnA titrated with NaOH (de Levie, J. Chem. Educ. 70 (1993)
// 209): h + [Na+] = [OH−] + Ct·n̄(h) + Cc·n̄c(h), with dilution, Kw at the run's temperature, optional carbonate in the
// titrant and optional Davies activity coefficients. n̄ is the mean number of protons the acid has lost.
//
// Conventions: with activity 'none' the measured pH is taken as −log10[H+] and the pKa's are the constants at the
// run's ionic strength ("apparent"); with 'davies' the measured pH is −log10 a(H+) and the pKa's are thermodynamic
// (I → 0), the concentration constants being recomputed from the ionic strength at every point.
import { CARBONIC_PKA_25C, daviesA, pKw as pKwAt } from './constants';

export type Activity = 'davies' | 'none';
const LN10 = Math.LN10;
const MAX_STEPS = 4;

export interface ModelSetup {
  /** Sample volume V0 (mL). */
  sampleVolumeMl: number;
  /** Sodium concentration of the titrant (mol/L). */
  titrantM: number;
  /** Total carbonate in the titrant (mol/L). */
  carbonateM?: number;
  temperatureC?: number;
  activity?: Activity;
  /** Override pKw (e.g. a textbook's 14.00); default from the CRC table at temperatureC. */
  pKw?: number;
}

/** Solver for one curve; holds its own scratch space so repeated evaluation does not allocate. Constants are kept
 * as plain numbers (not logarithms) so one point costs one exp per Newton step. */
export class ChargeBalanceModel {
  readonly V0: number;
  readonly Cb: number;
  readonly Cc: number;
  readonly pKw: number;
  readonly activity: Activity;
  readonly A: number;
  n = 1;
  private readonly KT = new Float64Array(MAX_STEPS);
  private readonly Kc = new Float64Array(MAX_STEPS);
  /** α_j of the analyte at the last solved point (fraction that has lost j protons). */
  readonly alpha = new Float64Array(MAX_STEPS + 1);
  // results of the last solve (read by the fit for its Jacobian)
  h = 1e-7;
  nbar = 0;
  dFdlnh = 1;
  Ct = 0;
  ionicStrength = 0;
  logGamma1 = 0;
  private readonly KwT: number;
  private Kwc: number;
  private ck1: number;
  private ck2: number;
  private readonly ck1T: number;
  private readonly ck2T: number;
  /** ionic strength the conditional constants were last computed for */
  private condI = NaN;
  private ccAlpha1 = 0;
  private ccAlpha2 = 0;
  private lastX = -7 * LN10;

  constructor(setup: ModelSetup) {
    this.V0 = setup.sampleVolumeMl;
    this.Cb = setup.titrantM;
    this.Cc = setup.carbonateM ?? 0;
    const t = setup.temperatureC ?? 25;
    this.pKw = setup.pKw ?? pKwAt(t);
    this.activity = setup.activity ?? 'none';
    this.A = daviesA(t);
    this.KwT = Math.pow(10, -this.pKw);
    this.Kwc = this.KwT;
    this.ck1T = Math.pow(10, -CARBONIC_PKA_25C[0]);
    this.ck2T = Math.pow(10, -CARBONIC_PKA_25C[1]);
    this.ck1 = this.ck1T;
    this.ck2 = this.ck2T;
  }

  /** Set the acid's pKa's (thermodynamic with Davies, apparent without). */
  setPKa(pKa: ArrayLike<number>): void {
    if (pKa.length < 1 || pKa.length > MAX_STEPS) throw new RangeError(`the model takes 1 to ${MAX_STEPS} pKa values`);
    this.n = pKa.length;
    for (let j = 0; j < this.n; j++) {
      this.KT[j] = Math.pow(10, -pKa[j]);
      this.Kc[j] = this.KT[j];
    }
    this.Kwc = this.KwT;
    this.condI = NaN;
  }

  private warmX = new Float64Array(0);
  private warmI = new Float64Array(0);

  /** pH at titrant volume V (mL) for `amountMmol` of acid; `offset` is added (electrode offset). `slot` (a reading's
   * index) starts the solver from that reading's last solution, which a fit revisits with slightly changed
   * parameters; the answer is the same to solver precision either way. */
  pHAt(V: number, amountMmol: number, offset = 0, slot = -1): number {
    if (slot >= 0) {
      if (slot >= this.warmX.length) {
        const nx = new Float64Array(Math.max(16, 2 * slot + 2)).fill(NaN);
        nx.set(this.warmX);
        const ni = new Float64Array(nx.length).fill(NaN);
        ni.set(this.warmI);
        this.warmX = nx;
        this.warmI = ni;
      }
      if (Number.isFinite(this.warmX[slot])) {
        this.lastX = this.warmX[slot];
        this.ionicStrength = this.warmI[slot];
      }
      const r = this.pHCore(V, amountMmol, offset);
      this.warmX[slot] = this.lastX;
      this.warmI[slot] = this.ionicStrength;
      return r;
    }
    return this.pHCore(V, amountMmol, offset);
  }

  /** Forget warm starts (e.g. before a fit from a new starting point, so results never depend on an earlier fit). */
  resetWarmStarts(): void {
    this.warmX.fill(NaN);
    this.warmI.fill(NaN);
  }

  private pHCore(V: number, amountMmol: number, offset: number): number {
    const Vt = this.V0 + V;
    const Na = (this.Cb * V) / Vt;
    const Ct = amountMmol / Vt;
    const Cct = (this.Cc * V) / Vt;
    this.Ct = Ct;
    this.Cct = Cct;
    if (this.activity === 'none') {
      this.solve(Na, Ct, Cct);
      this.ionicStrength = this.currentI(Na, Ct, Cct);
      this.logGamma1 = 0;
    } else {
      // Newton on the coupled pair (ln h, I), started from this point's or the last point's solution; both
      // converge quadratically. If that does not settle, alternate full solves of h with updates of I.
      let I = this.ionicStrength > 0 ? this.ionicStrength : Na + 0.5 * Ct;
      let x = this.lastX;
      let ok = false;
      for (let it = 0; it < 40; it++) {
        this.setConditional(I);
        const F = this.evalF(x, Na, Ct, Cct);
        const G = I - this.currentI(Na, Ct, Cct);
        this.coupledPartials(I);
        const Fx = this.dFdlnh;
        const det = Fx * this.GI - this.FI * this.Gx;
        let dx = (-F * this.GI + this.FI * G) / det;
        let dI = (-G * Fx + this.Gx * F) / det;
        if (!Number.isFinite(dx) || !Number.isFinite(dI)) { dx = -F / Fx; dI = -G; }
        if (dx > 3) dx = 3;
        else if (dx < -3) dx = -3;
        while (I + dI <= 0) dI *= 0.5;
        x += dx;
        I += dI;
        if (Math.abs(dx) < 1e-11 && Math.abs(dI) <= 1e-11 * I + 1e-18) { ok = true; break; }
      }
      if (ok) {
        // accept only a genuine solution of both equations
        this.setConditional(I);
        const F = this.evalF(x, Na, Ct, Cct);
        const Ic = this.currentI(Na, Ct, Cct);
        ok = I > 0 && Math.abs(Ic - I) <= 1e-9 * I && Math.abs(F) <= 1e-9 * (this.h + Na + this.Kwc / this.h);
      }
      if (!ok) I = Na + 0.5 * Ct + 1e-7;
      if (ok) {
        this.setConditional(I);
        this.evalF(x, Na, Ct, Cct);
        this.lastX = x;
      } else {
        for (let it = 0; it < 60; it++) {
          this.setConditional(I);
          this.solve(Na, Ct, Cct);
          const In = this.currentI(Na, Ct, Cct);
          const done = Math.abs(In - I) <= 1e-13 * In + 1e-18;
          I = In;
          if (done) break;
        }
      }
      this.ionicStrength = I;
    }
    return -Math.log10(this.h) - this.logGamma1 + offset;
  }

  /** Conditional (concentration) constants at ionic strength I by the Davies equation. With g = 10^(A·f(I)),
   * f = √I/(1+√I) − 0.3 I: γ(z) = g^(−z²), so step j (charge j → j+1) has Kc = KT γ(j)/(γ(1) γ(j+1)) = KT g^(2j+2),
   * Kw,c = Kw g², and carbonate K1c = K1 g², K2c = K2 g⁴. */
  private setConditional(I: number): void {
    if (I === this.condI) return;
    this.condI = I;
    const s = Math.sqrt(I);
    const Af = this.A * (s / (1 + s) - 0.3 * I);
    const g = Math.exp(Af * LN10);
    const g2 = g * g;
    let gp = g2;
    for (let j = 0; j < this.n; j++) {
      this.Kc[j] = this.KT[j] * gp;
      gp *= g2;
    }
    this.Kwc = this.KwT * g2;
    this.ck1 = this.ck1T * g2;
    this.ck2 = this.ck2T * g2 * g2;
    this.logGamma1 = -Af;
  }

  /** Ionic strength ½Σcz², rewritten with electroneutrality (h + Na = OH + Ct Σjα_j + Cc(α1c + 2α2c)) as
   * h + Na + ½ Ct Σ j(j−1) α_j + Cc α2c: equal at the solution, and nearly independent of h, so the fixed point on
   * I converges fast. */
  private currentI(Na: number, Ct: number, Cct: number): number {
    let s = 0;
    for (let j = 2; j <= this.n; j++) s += j * (j - 1) * this.alpha[j];
    return this.h + Na + 0.5 * Ct * s + Cct * this.ccAlpha2;
  }

  /** Newton in x = ln h, kept inside a shrinking bracket (F is strictly increasing in h). */
  private solve(Na: number, Ct: number, Cct: number): void {
    let lo = -40 * LN10;
    let hi = 3 * LN10;
    let x = this.lastX;
    if (!(x > lo && x < hi)) x = -7 * LN10;
    for (let it = 0; it < 200; it++) {
      const F = this.evalF(x, Na, Ct, Cct);
      if (F > 0) hi = x;
      else lo = x;
      let dx = -F / this.dFdlnh;
      // a Newton step of more than ~1.3 pH overshoots on the exponential terms: clamp, then bisect if it leaves the bracket
      if (dx > 3) dx = 3;
      else if (dx < -3) dx = -3;
      if (Math.abs(dx) < 1e-12) {
        x += dx;
        break;
      }
      let xn = x + dx;
      if (!(xn > lo && xn < hi)) xn = 0.5 * (lo + hi);
      x = xn;
      if (hi - lo < 1e-12) break;
    }
    this.evalF(x, Na, Ct, Cct);
    this.lastX = x;
  }

  /** F(ln h) = h + Na − Kw/h − Ct n̄ − Cc n̄c; also stores α, n̄ and dF/d ln h. */
  private evalF(x: number, Na: number, Ct: number, Cct: number): number {
    const h = Math.exp(x);
    this.h = h;
    const n = this.n;
    const al = this.alpha;
    // α_j ∝ Π_{i≤j} Kc_i / h
    let r = 1;
    let sum = 1;
    al[0] = 1;
    for (let j = 1; j <= n; j++) {
      r *= this.Kc[j - 1] / h;
      al[j] = r;
      sum += r;
    }
    let nbar = 0;
    let m2 = 0;
    const inv = 1 / sum;
    for (let j = 0; j <= n; j++) {
      const a = al[j] * inv;
      al[j] = a;
      nbar += j * a;
      m2 += j * j * a;
    }
    this.nbar = nbar;
    let cnbar = 0;
    let cvar = 0;
    if (Cct > 0) {
      const t1 = this.ck1 / h;
      const t2 = t1 * (this.ck2 / h);
      const s = 1 + t1 + t2;
      this.ccAlpha1 = t1 / s;
      this.ccAlpha2 = t2 / s;
      cnbar = this.ccAlpha1 + 2 * this.ccAlpha2;
      cvar = this.ccAlpha1 + 4 * this.ccAlpha2 - cnbar * cnbar;
    }
    const oh = this.Kwc / h;
    this.dFdlnh = h + oh + Ct * (m2 - nbar * nbar) + Cct * cvar;
    return h + Na - oh - Ct * nbar - Cct * cnbar;
  }

  // partial derivatives of the coupled system F(x, I) = 0, G(x, I) = I − Φ(x, I) = 0 at the last evaluated point
  private Cct = 0;
  private FI = 0;
  private Gx = 0;
  private GI = 1;
  private fp = 0;

  /** ∂F/∂I, ∂G/∂x, ∂G/∂I (x = ln h) from the current α, with g = 10^(A f(I)) and Kc_j ∝ g^(2j+2), Kw,c ∝ g². */
  private coupledPartials(I: number): void {
    const n = this.n;
    const al = this.alpha;
    const nbar = this.nbar;
    const Ct = this.Ct;
    const h = this.h;
    const sI = Math.sqrt(I);
    const fp = 1 / (2 * sI * (1 + sI) * (1 + sI)) - 0.3; // f'(I), f = √I/(1+√I) − 0.3 I
    const c = LN10 * this.A * fp; // d ln g / dI
    const oh = this.Kwc / h;
    let M = 0; // Σ j(j+1) α_j
    let Qx = 0; // Σ j(j−1) α_j (n̄ − j)
    for (let j = 0; j <= n; j++) {
      M += j * (j + 1) * al[j];
      Qx += j * (j - 1) * al[j] * (nbar - j);
    }
    let sumS = 0;
    for (let k = 0; k < n; k++) {
      let sk = 0;
      for (let j = k + 1; j <= n; j++) sk += al[j] * (j - nbar);
      sumS += (2 * k + 2) * sk;
    }
    let QI = 0;
    for (let j = 0; j <= n; j++) QI += j * (j - 1) * al[j] * (j * (j + 1) - M);
    this.FI = -2 * c * oh - Ct * c * sumS;
    this.Gx = -h - 0.5 * Ct * Qx;
    this.GI = 1 - 0.5 * Ct * c * QI;
    if (this.Cct > 0) {
      // carbonate: ln t1 and ln t2 grow with I by 2c and 6c (K1c ∝ g², K1c·K2c ∝ g⁶)
      const a1 = this.ccAlpha1;
      const a2 = this.ccAlpha2;
      const nc = a1 + 2 * a2;
      const Lm = 2 * a1 + 6 * a2;
      this.FI -= this.Cct * c * (2 * a1 + 12 * a2 - nc * Lm);
      this.Gx -= this.Cct * a2 * (nc - 2);
      this.GI -= this.Cct * a2 * c * (6 - Lm);
    }
    this.fp = fp;
  }

  /** Exact ∂pH/∂pKa_k (out[k], k < n) and ∂pH/∂amount (out[n], per mmol) at the last solved point, volume V.
   * Implicit differentiation of the charge balance F(ln h, I) = 0 and, with Davies, of the ionic-strength equation
   * I = h + Na + ½ Ct Σ j(j−1) α_j as well (carbonate's small share of the I-dependence is left out). */
  gradient(V: number, out: Float64Array | number[]): void {
    const n = this.n;
    const al = this.alpha;
    const nbar = this.nbar;
    const Ct = this.Ct;
    const Vt = this.V0 + V;
    const Fx = this.dFdlnh;
    if (this.activity === 'none') {
      for (let k = 0; k < n; k++) {
        let sk = 0;
        for (let j = k + 1; j <= n; j++) sk += al[j] * (j - nbar);
        out[k] = (Ct * sk) / Fx;
      }
      out[n] = -nbar / Vt / (LN10 * Fx);
      return;
    }
    this.coupledPartials(this.ionicStrength);
    const { FI, Gx, GI, fp } = this;
    let Q = 0; // Σ j(j−1) α_j
    for (let j = 2; j <= n; j++) Q += j * (j - 1) * al[j];
    // dpH/dp = −(dx/dp)/ln10 + A f'(I) dI/dp with [Fx FI; Gx GI]·[dx; dI] = −[Fp; Gp] (Cramer's rule):
    // = (Fp·(GI/ln10 + A f' Gx) − Gp·(FI/ln10 + A f' Fx)) / det
    const det = Fx * GI - FI * Gx;
    const wF = (GI / LN10 + this.A * fp * Gx) / det;
    const wG = -(FI / LN10 + this.A * fp * Fx) / det;
    for (let k = 0; k < n; k++) {
      let sk = 0;
      let pk = 0;
      for (let j = k + 1; j <= n; j++) {
        sk += al[j] * (j - nbar);
        pk += al[j];
      }
      let gq = 0;
      for (let j = 0; j <= n; j++) gq += j * (j - 1) * al[j] * ((j > k ? 1 : 0) - pk);
      out[k] = wF * (Ct * LN10 * sk) + wG * (0.5 * Ct * LN10 * gq);
    }
    out[n] = wF * (-nbar / Vt) + wG * ((-0.5 * Q) / Vt);
  }

  /** Explicit volume at a given pH (de Levie's form V = V0 (Ca n̄ − Δ)/(Cb − Cc n̄c + Δ)); negative or non-finite
   * where no volume gives that pH. With Davies the ionic strength is iterated. */
  volumeAtPH(pH: number, amountMmol: number): number {
    const Ca = amountMmol / this.V0;
    let V = 0;
    let I = 0;
    for (let it = 0; it < 100; it++) {
      if (this.activity === 'davies') this.setConditional(I);
      const h = Math.pow(10, -pH - this.logGamma1); // pH = −log10(γ h)
      const Vt = this.V0 + V;
      this.evalF(Math.log(h), (this.Cb * V) / Vt, amountMmol / Vt, (this.Cc * V) / Vt);
      const delta = h - this.Kwc / h;
      const cn = this.ccAlpha1 + 2 * this.ccAlpha2;
      const Vn = (this.V0 * (Ca * this.nbar - delta)) / (this.Cb - this.Cc * cn + delta);
      // with Davies an early pass may land slightly below zero (I starts at 0): keep iterating while V0 + V > 0
      if (this.activity === 'none' || !Number.isFinite(Vn) || Vn <= -this.V0) return Vn;
      const Vtn = this.V0 + Vn;
      const In = this.currentI((this.Cb * Vn) / Vtn, amountMmol / Vtn, (this.Cc * Vn) / Vtn);
      const done = Math.abs(Vn - V) <= 1e-12 * (1 + Vn) && Math.abs(In - I) <= 1e-13 * In + 1e-18;
      V = Vn;
      I = In;
      if (done) break;
    }
    return V;
  }
}

/** Equivalence volumes (mL) j·n/Cb for j = 1..steps. */
export function equivalenceVolumes(amountMmol: number, titrantM: number, steps: number): number[] {
  const out: number[] = [];
  for (let j = 1; j <= steps; j++) out.push((j * amountMmol) / titrantM);
  return out;
}
