// Exact charge-balance model of a polyprotic weak acid HnA titrated with NaOH (de Levie, J. Chem. Educ. 70 (1993)
// 209): h + [Na+] = [OH−] + Ct·n̄(h) + Cc·n̄c(h), with dilution, Kw at the run's temperature, optional carbonate in the
// titrant and optional Davies activity coefficients. n̄ is the mean number of protons the acid has lost.
//
// Conventions: with activity 'none' the measured pH is taken as −log10[H+] and the pKa's are the constants at the
// run's ionic strength ("apparent"); with 'davies' the measured pH is −log10 a(H+) and the pKa's are thermodynamic
// (I → 0), the concentration constants being recomputed from the ionic strength at every point.
import { CARBONIC_PKA_25C, daviesA, daviesLogGamma, pKw as pKwAt } from './constants';

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

/** Solver for one curve; holds its own scratch space so repeated evaluation does not allocate. */
export class ChargeBalanceModel {
  readonly V0: number;
  readonly Cb: number;
  readonly Cc: number;
  readonly pKw: number;
  readonly activity: Activity;
  readonly A: number;
  n = 1;
  private readonly logKT = new Float64Array(MAX_STEPS);
  private readonly logKc = new Float64Array(MAX_STEPS);
  private readonly lt = new Float64Array(MAX_STEPS + 1);
  /** α_j of the analyte at the last solved point (fraction that has lost j protons). */
  readonly alpha = new Float64Array(MAX_STEPS + 1);
  // results of the last solve (read by the fit for its Jacobian)
  h = 1e-7;
  nbar = 0;
  dFdlnh = 1;
  Ct = 0;
  ionicStrength = 0;
  logGamma1 = 0;
  private ccAlpha1 = 0;
  /** Conditional carbonic constants at the current ionic strength. */
  private ck1 = Math.pow(10, -CARBONIC_PKA_25C[0]);
  private ck2 = Math.pow(10, -CARBONIC_PKA_25C[1]);
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
  }

  /** Set the acid's pKa's (thermodynamic with Davies, apparent without). */
  setPKa(pKa: ArrayLike<number>): void {
    if (pKa.length < 1 || pKa.length > MAX_STEPS) throw new RangeError(`the model takes 1 to ${MAX_STEPS} pKa values`);
    this.n = pKa.length;
    for (let j = 0; j < this.n; j++) this.logKT[j] = -pKa[j];
  }

  /** pH at titrant volume V (mL) for `amountMmol` of acid; `offset` is added (electrode offset). */
  pHAt(V: number, amountMmol: number, offset = 0): number {
    const Vt = this.V0 + V;
    const Na = (this.Cb * V) / Vt;
    const Ct = amountMmol / Vt;
    const Cct = (this.Cc * V) / Vt;
    this.Ct = Ct;
    if (this.activity === 'none') {
      this.setConditional(0);
      this.solve(Na, Ct, Cct, this.pKw);
      this.ionicStrength = this.currentI(Na, Ct, Cct);
      this.logGamma1 = 0;
    } else {
      // Fixed point on the ionic strength: it changes little with h, so a few passes converge to machine precision.
      let I = 0.5 * (Na + Na) + Ct * 0.5;
      for (let it = 0; it < 30; it++) {
        const lg1 = this.setConditional(I);
        this.solve(Na, Ct, Cct, this.pKw + 2 * lg1);
        const In = this.currentI(Na, Ct, Cct);
        const done = Math.abs(In - I) <= 1e-13 * (1 + In);
        I = In;
        if (done) break;
      }
      this.ionicStrength = I;
      this.logGamma1 = this.setConditional(I);
    }
    return -Math.log10(this.h) - this.logGamma1 + offset;
  }

  /** Conditional (concentration) constants at ionic strength I; returns log10 γ(±1). */
  private setConditional(I: number): number {
    if (this.activity === 'none' || I <= 0) {
      for (let j = 0; j < this.n; j++) this.logKc[j] = this.logKT[j];
      this.ck1 = Math.pow(10, -CARBONIC_PKA_25C[0]);
      this.ck2 = Math.pow(10, -CARBONIC_PKA_25C[1]);
      return 0;
    }
    const A = this.A;
    const lg1 = daviesLogGamma(1, I, A);
    // H2CO3 ⇌ H+ + HCO3−: K1c = K1 / γ1²;  HCO3− ⇌ H+ + CO3²−: K2c = K2 / γ2
    this.ck1 = Math.pow(10, -CARBONIC_PKA_25C[0] - 2 * lg1);
    this.ck2 = Math.pow(10, -CARBONIC_PKA_25C[1] - daviesLogGamma(2, I, A));
    for (let j = 0; j < this.n; j++) {
      // H(n−j)A^(j−) ⇌ H+ + H(n−j−1)A^((j+1)−): Kc = KT γ(j) / (γH γ(j+1))
      this.logKc[j] = this.logKT[j] + daviesLogGamma(j, I, A) - lg1 - daviesLogGamma(j + 1, I, A);
    }
    return lg1;
  }

  private currentI(Na: number, Ct: number, Cct: number): number {
    let s = 0;
    for (let j = 1; j <= this.n; j++) s += j * j * this.alpha[j];
    const oh = Math.pow(10, -this.pKwCond) / this.h;
    return 0.5 * (this.h + Na + oh + Ct * s + Cct * (this.ccAlpha1 + 4 * this.ccAlpha2));
  }

  private pKwCond = 14;

  /** Newton in x = ln h, kept inside a shrinking bracket (F is strictly increasing in h). */
  private solve(Na: number, Ct: number, Cct: number, pKwCond: number): void {
    this.pKwCond = pKwCond;
    const Kw = Math.pow(10, -pKwCond);
    let lo = -40 * LN10;
    let hi = 3 * LN10;
    let x = this.lastX;
    if (!(x > lo && x < hi)) x = -7 * LN10;
    for (let it = 0; it < 200; it++) {
      const F = this.evalF(x, Na, Ct, Cct, Kw);
      if (F > 0) hi = x;
      else lo = x;
      let xn = x - F / this.dFdlnh;
      if (!(xn > lo && xn < hi)) xn = 0.5 * (lo + hi);
      const dx = xn - x;
      x = xn;
      if (Math.abs(dx) < 1e-13 || hi - lo < 1e-13) break;
    }
    this.evalF(x, Na, Ct, Cct, Kw);
    this.lastX = x;
  }

  /** F(ln h) = h + Na − Kw/h − Ct n̄ − Cc n̄c; also stores α, n̄ and dF/d ln h. */
  private evalF(x: number, Na: number, Ct: number, Cct: number, Kw: number): number {
    const h = Math.exp(x);
    this.h = h;
    const n = this.n;
    const lh = x / LN10;
    // log10 of t_j = h^(n−j) Π_{i≤j} K_i, scaled by the largest for stability
    let acc = 0;
    let mx = -Infinity;
    for (let j = 0; j <= n; j++) {
      if (j > 0) acc += this.logKc[j - 1];
      const v = (n - j) * lh + acc;
      this.lt[j] = v;
      if (v > mx) mx = v;
    }
    let sum = 0;
    for (let j = 0; j <= n; j++) {
      const e = Math.pow(10, this.lt[j] - mx);
      this.alpha[j] = e;
      sum += e;
    }
    let nbar = 0;
    let m2 = 0;
    for (let j = 0; j <= n; j++) {
      const a = this.alpha[j] / sum;
      this.alpha[j] = a;
      nbar += j * a;
      m2 += j * j * a;
    }
    const varj = m2 - nbar * nbar;
    this.nbar = nbar;
    let cnbar = 0;
    let cvar = 0;
    if (Cct > 0) {
      const k1 = this.ck1, k2 = this.ck2;
      const t0 = h * h, t1 = h * k1, t2 = k1 * k2;
      const s = t0 + t1 + t2;
      this.ccAlpha1 = t1 / s;
      this.ccAlpha2 = t2 / s;
      cnbar = this.ccAlpha1 + 2 * this.ccAlpha2;
      cvar = this.ccAlpha1 + 4 * this.ccAlpha2 - cnbar * cnbar;
    } else {
      this.ccAlpha1 = 0;
      this.ccAlpha2 = 0;
    }
    const oh = Kw / h;
    this.dFdlnh = h + oh + Ct * varj + Cct * cvar;
    return h + Na - oh - Ct * nbar - Cct * cnbar;
  }

  /** ∂pH/∂pKa_k (k from 0) and ∂pH/∂amount at the last solved point, γ held fixed. */
  dpHdpKa(k: number): number {
    let s = 0;
    for (let j = k + 1; j <= this.n; j++) s += this.alpha[j] * (j - this.nbar);
    return (this.Ct * s) / this.dFdlnh;
  }
  dpHdAmount(V: number): number {
    return -this.nbar / (this.V0 + V) / (LN10 * this.dFdlnh);
  }

  /** Explicit volume at a given pH (de Levie's form V = V0 (Ca n̄ − Δ)/(Cb − Cc n̄c + Δ)); NaN where no volume
   * ≥ 0 gives that pH. With Davies the ionic strength is iterated. */
  volumeAtPH(pH: number, amountMmol: number): number {
    const Ca = amountMmol / this.V0;
    let V = 0;
    let I = 0;
    for (let it = 0; it < 60; it++) {
      const lg1 = this.setConditional(I);
      const pKwC = this.pKw + 2 * lg1;
      const h = Math.pow(10, -(pH + lg1)); // pH = −log10(γ h) → h = 10^(−pH)/γ
      this.pKwCond = pKwC;
      const Vt = this.V0 + V;
      this.evalF(Math.log(h), (this.Cb * V) / Vt, amountMmol / Vt, (this.Cc * V) / Vt, Math.pow(10, -pKwC));
      const delta = h - Math.pow(10, -pKwC) / h;
      const cn = this.ccAlpha1 + 2 * this.ccAlpha2;
      const Vn = (this.V0 * (Ca * this.nbar - delta)) / (this.Cb - this.Cc * cn + delta);
      if (this.activity === 'none') return Vn;
      if (!(Vn >= 0) || !Number.isFinite(Vn)) return Vn;
      const Vtn = this.V0 + Vn;
      this.Ct = amountMmol / Vtn;
      const In = this.currentI((this.Cb * Vn) / Vtn, amountMmol / Vtn, (this.Cc * Vn) / Vtn);
      const done = Math.abs(Vn - V) <= 1e-12 * (1 + Vn) && Math.abs(In - I) <= 1e-13;
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
