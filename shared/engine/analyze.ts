// The whole analysis of one run: time → volume, breaks by derivative and Gran, whole-curve fit, half-equivalence,
// derived results with GUM budgets. Deterministic (no randomness, no clock) and cheap enough to rerun per reading.
import { runDocumentSchema, type AnalysisResult, type BudgetRow, type RunDocument } from '../schemas/run-document';
import { DEFAULT_BALANCE_U_G, daviesA, daviesLogGamma, pKw as pKwAt } from './constants';
import { findBreaks, lineFit, type Break } from './breaks';
import { productBudget } from './budget';
import { timeToVolume } from './delivery';
import { parseOrThrow } from './errors';
import { effectiveWeights, fitCurve, type FitOutput } from './fit';
import { ChargeBalanceModel } from './model';
import { localPolyValue, savitzkyGolay } from './savgol';

export interface AnalyzeOptions {
  /** The document was already validated with runDocumentSchema (skips the zod pass). */
  validated?: boolean;
  /** Standard uncertainty of the moment a tap records (s); 0.2 s is a common reaction time (common practice). */
  tapTimingUncertaintyS?: number;
  /** Standard uncertainty of one pH reading; 0.01 (common practice). */
  pHUncertainty?: number;
}

type Method = AnalysisResult['methods'][number];

const MIN_READINGS = 7;

function fmt(x: number, d = 2): string {
  return x.toFixed(d);
}

export function analyzeRun(input: RunDocument, options: AnalyzeOptions = {}): AnalysisResult {
  const doc: RunDocument = options.validated ? input : parseOrThrow(runDocumentSchema, input);
  const warnings: string[] = [];
  const T = doc.temperatureC ?? 25;
  if (doc.temperatureC === undefined) warnings.push('temperatureC not given: 25 °C assumed for Kw and activity');
  const pkw = pKwAt(T);
  const activity = doc.activity ?? 'davies';
  const N = doc.readings.length;
  const times = new Float64Array(N);
  const pH = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    times[i] = doc.readings[i].timeS;
    pH[i] = doc.readings[i].pH;
  }
  const tv = timeToVolume(doc.delivery, times);
  warnings.push(...tv.warnings);
  const V = Float64Array.from(tv.volumesMl);
  const map = tv.deliveryMap;
  const Cb = doc.titrant.concentrationM;
  const V0 = doc.sample.volumeMl;

  const result: AnalysisResult = {
    equivalencePoints: [],
    halfEquivalence: [],
    pKa: [],
    pKaU: [],
    Ka: [],
    KaU: [],
    pKaThermodynamic: [],
    ionicStrengthM: [],
    fit: null,
    molarMassGPerMol: null,
    molarMassU: null,
    molarMassBudget: [],
    analyteConcentrationM: null,
    analyteConcentrationU: null,
    purity: null,
    purityU: null,
    methods: [],
    delivery: tv.map,
    volumesMl: tv.volumesMl,
    uVolumesMl: tv.uVolumesMl,
    derivative: [],
    gran: { before: [], after: [] },
    pKw: pkw,
    temperatureC: T,
    warnings,
  };

  if (N < MIN_READINGS) {
    warnings.push(`only ${N} reading(s): at least ${MIN_READINGS} are needed to look for an equivalence point`);
    return result;
  }

  // ---- derivatives (Savitzky–Golay, quadratic over 5 readings, real volume spacing) ----
  const sg = savitzkyGolay(V, pH, 2, 2);
  for (let i = 0; i < N; i++) {
    if (Number.isFinite(sg.d1[i]) && Number.isFinite(sg.d2[i])) result.derivative.push({ volumeMl: V[i], dpHdV: sg.d1[i], d2pHdV2: sg.d2[i] });
  }
  // robust noise estimate from the smoothing residuals (centre-point leverage of a 5-point quadratic is 17/35)
  const absRes: number[] = [];
  for (let i = 0; i < N; i++) absRes.push(Math.abs(pH[i] - sg.smooth[i]));
  absRes.sort((a, b) => a - b);
  const noise = (1.4826 * absRes[absRes.length >> 1]) / Math.sqrt(1 - 17 / 35);

  const search = findBreaks(V, pH, sg, noise);
  warnings.push(...search.warnings);
  const breaks = search.breaks;
  const lastV = V[N - 1];
  const lastPH = pH[N - 1];
  if (!breaks.length) {
    if (search.endsInBreak) {
      warnings.push(`the run stopped inside the first equivalence break (pH ${fmt(lastPH)} at ${fmt(lastV)} mL and still rising steeply): continue until the pH levels off, about 2 pH units higher`);
    } else if (lastPH < 9) {
      warnings.push(`the run stopped before the first equivalence point (last reading pH ${fmt(lastPH)} at ${fmt(lastV)} mL): continue past pH ~9 until the pH levels off`);
    } else {
      warnings.push('no equivalence break found: the pH rises without a clear steep step (check the electrode, the titrant concentration, and that the sample is a weak acid)');
    }
    return result;
  }
  if (search.endsInBreak) warnings.push(`the run stopped inside a further break (pH ${fmt(lastPH)} at ${fmt(lastV)} mL and still rising steeply): continue until the pH levels off to use it`);

  // ---- whole-curve fit ----
  let steps = doc.steps ?? doc.sample.acidProtons ?? breaks.length;
  steps = Math.min(4, Math.max(1, steps));
  if (steps < breaks.length) warnings.push(`${breaks.length} breaks found but the model fits ${steps} acidic proton(s): the extra breaks are not explained (a mixture?)`);
  const uPH = options.pHUncertainty ?? 0.01;
  const uTap = options.tapTimingUncertaintyS ?? 0.2;
  // effective variance: a timing error moves pH by (dpH/dV)·(dV/dt)·δt, so steep points weigh less
  const rates = new Float64Array(N);
  for (let i = 0; i < N; i++) rates[i] = map.rateAt(times[i]);
  const w = effectiveWeights(sg.d1, rates, uPH, uTap);
  const model = new ChargeBalanceModel({ sampleVolumeMl: V0, titrantM: Cb, carbonateM: doc.titrant.carbonateM, temperatureC: T, activity });
  const pHAtV = (v: number) => localPolyValue(V, pH, v, 2, 2);
  const startFor = (ve1: number) => {
    const pk: number[] = [];
    for (let j = 1; j <= steps; j++) {
      const vm = (j - 0.5) * ve1;
      let g = vm <= lastV ? pHAtV(vm) : Math.min(13.5, lastPH + 1);
      if (j > 1 && g < pk[j - 2] + 0.3) g = pk[j - 2] + 0.3;
      pk.push(g);
    }
    return { pKa: pk, ve1Ml: ve1, offset: 0 };
  };
  const starts = [startFor(breaks[0].derivativeMl)];
  if (steps > 1 && steps !== breaks.length) starts.push(startFor(breaks[breaks.length - 1].derivativeMl / steps));
  // fit from the start that fits best as it stands; try the others only when that fit stays poor
  const fitOpts = { fitOffset: !!doc.fitElectrodeOffset };
  if (starts.length > 1) {
    const c0 = starts.map((s) => fitCurve(model, V, pH, w, s, { ...fitOpts, maxIterations: 0 }).weightedCost);
    if (c0[1] < c0[0]) starts.reverse();
  }
  let fit: FitOutput | null = null;
  for (const s of starts) {
    const f = fitCurve(model, V, pH, w, s, fitOpts);
    if (!Number.isFinite(f.weightedCost) || !(f.ve1Ml > 0)) continue;
    if (!fit || f.weightedCost < fit.weightedCost) fit = f;
    if (fit.converged && fit.rmse <= Math.max(0.02, 3 * noise)) break;
  }
  if (fit && (!fit.converged || !Number.isFinite(fit.uVe1Ml))) {
    warnings.push('the whole-curve fit did not converge: the equivalence points come from the derivative instead');
    fit = null;
  }

  // ---- assign each break to a step ----
  const stepOf = (b: Break, k: number) => {
    if (!fit) return k + 1;
    const j = Math.round(b.derivativeMl / fit.ve1Ml);
    return Math.min(steps, Math.max(1, j));
  };
  const assigned = breaks.map((b, k) => ({ b, step: stepOf(b, k) }));

  // ---- methods ----
  const methods: Method[] = [];
  const granBefore = result.gran.before;
  const granAfter = result.gran.after;
  for (let k = 0; k < assigned.length; k++) {
    const { b, step } = assigned[k];
    methods.push({ method: 'derivative', step, volumeMl: b.derivativeMl, uMl: b.uDerivativeMl, note: 'maximum of the Savitzky–Golay first derivative, parabolic refinement' });
    if (b.secondDerivativeMl !== null) methods.push({ method: 'secondDerivative', step, volumeMl: b.secondDerivativeMl, uMl: b.uDerivativeMl, note: 'zero crossing of the second derivative' });
    // Gran before: (V − Vb)·10^−pH = Ka (Ve − V) in the middle of the buffer region
    const Vb = k === 0 ? (fit ? (step - 1) * fit.ve1Ml : 0) : assigned[k - 1].b.derivativeMl;
    const Ve = b.derivativeMl;
    const xs: number[] = [];
    const ys: number[] = [];
    for (let i = 0; i < N; i++) {
      if (V[i] <= Vb || V[i] >= Ve) continue;
      const g = (V[i] - Vb) * Math.pow(10, -pH[i]);
      const used = V[i] >= Vb + 0.3 * (Ve - Vb) && V[i] <= Vb + 0.8 * (Ve - Vb);
      granBefore.push({ step, volumeMl: V[i], value: g, used });
      if (used) { xs.push(V[i]); ys.push(g); }
    }
    const lf = lineFit(xs, ys);
    if (lf && lf.slope < 0) methods.push({ method: 'granBefore', step, volumeMl: lf.xIntercept, uMl: lf.uXIntercept, note: `Gran (1952) weak-acid plot over ${lf.points} readings; Ka ≈ ${(-lf.slope).toExponential(3)}` });
    // Gran after (excess base): only after the last proton, where no further weak step buffers
    if (k === assigned.length - 1 && step === steps) {
      const span = Ve - Vb;
      const xa: number[] = [];
      const ya: number[] = [];
      for (let i = 0; i < N; i++) {
        if (V[i] <= Ve) continue;
        const g = (V0 + V[i]) * Math.pow(10, pH[i] - pkw);
        const used = V[i] >= Ve + 0.1 * span && pH[i] <= 12.5;
        granAfter.push({ volumeMl: V[i], value: g, used });
        if (used) { xa.push(V[i]); ya.push(g); }
      }
      const la = lineFit(xa, ya);
      if (la && la.slope > 0) methods.push({ method: 'granAfter', step, volumeMl: la.xIntercept, uMl: la.uXIntercept, note: `excess-base Gran plot over ${la.points} readings; slope ${la.slope.toFixed(4)} mmol/mL vs titrant ${Cb} mol/L` });
    }
  }
  if (fit) for (let j = 1; j <= steps; j++) if (j * fit.ve1Ml <= lastV * 1.02) methods.push({ method: 'fit', step: j, volumeMl: j * fit.ve1Ml, uMl: j * fit.uVe1Ml, note: 'whole-curve charge-balance fit' });
  result.methods = methods;

  // ---- best estimates ----
  for (const { b, step } of assigned) {
    let v: number;
    let uStat: number;
    let method: string;
    if (fit) {
      v = step * fit.ve1Ml;
      uStat = step * fit.uVe1Ml;
      method = 'fit';
      const dv = Math.abs(b.derivativeMl - v);
      if (dv > Math.max(3 * Math.hypot(uStat, b.uDerivativeMl), 0.01 * v)) {
        warnings.push(`step ${step}: the derivative puts the equivalence point at ${fmt(b.derivativeMl)} mL, the fit at ${fmt(v)} mL; the model may not describe this sample (mixture, carbonate, wrong proton count?)`);
      }
    } else {
      v = b.derivativeMl;
      uStat = b.uDerivativeMl;
      method = 'derivative';
    }
    const t = map.timeAt(v);
    const uMl = Math.hypot(uStat, map.uVolumeAt(t));
    let pHe: number;
    if (fit) {
      model.setPKa(fit.pKa);
      pHe = model.pHAt(v, Cb * fit.ve1Ml, fit.offset ?? 0);
    } else pHe = pHAtV(v);
    result.equivalencePoints.push({ step, volumeMl: v, timeS: t, pH: pHe, uMl, method });
  }

  // ---- pKa: fit (apparent and thermodynamic) and half-equivalence ----
  const A = daviesA(T);
  if (fit) {
    model.setPKa(fit.pKa);
    for (let j = 1; j <= steps; j++) {
      const vh = (j - 0.5) * fit.ve1Ml;
      model.pHAt(Math.min(vh, lastV), Cb * fit.ve1Ml, 0);
      const I = model.ionicStrength;
      // pKa(mixed, at I) = pKa(thermodynamic) − A (2j − 1) (√I/(1+√I) − 0.3 I)  (Davies)
      const shift = -daviesLogGamma(1, I, A) * (2 * j - 1);
      const thermo = activity === 'davies' ? fit.pKa[j - 1] : fit.pKa[j - 1] + shift;
      const apparent = activity === 'davies' ? fit.pKa[j - 1] - shift : fit.pKa[j - 1];
      const u = fit.uPKa[j - 1];
      result.pKa.push(apparent);
      result.pKaU.push(u);
      result.pKaThermodynamic.push(thermo);
      result.ionicStrengthM.push(I);
      const Ka = Math.pow(10, -apparent);
      result.Ka.push(Ka);
      result.KaU.push(Ka * Math.LN10 * u);
      if (!(u < 0.05)) warnings.push(`pKa${j} is poorly determined by these readings (u = ${Number.isFinite(u) ? fmt(u, 3) : 'undefined'})${vh > lastV ? ': its buffer region lies beyond the last reading' : ''}`);
    }
    result.fit = {
      steps,
      activity,
      rmse: fit.rmse,
      residuals: fit.residuals,
      equivalenceVolumesMl: Array.from({ length: steps }, (_, k) => (k + 1) * fit!.ve1Ml),
      uEquivalenceVolumesMl: Array.from({ length: steps }, (_, k) => (k + 1) * fit!.uVe1Ml),
      electrodeOffset: fit.offset,
      uElectrodeOffset: fit.uOffset,
      iterations: fit.iterations,
      converged: fit.converged,
      pointsUsed: N,
    };
    if (fit.rmse > Math.max(0.05, 5 * noise)) warnings.push(`the fit leaves an RMSE of ${fmt(fit.rmse, 3)} pH: the model describes the curve poorly (check the proton count, carbonate, or electrode)`);
  }
  const veList = fit ? Array.from({ length: steps }, (_, k) => (k + 1) * fit!.ve1Ml) : result.equivalencePoints.map((e) => e.volumeMl);
  for (let j = 1; j <= veList.length; j++) {
    const vh = 0.5 * ((j > 1 ? veList[j - 2] : 0) + veList[j - 1]);
    if (vh < V[0] || vh > lastV) continue;
    const ph = pHAtV(vh);
    result.halfEquivalence.push({ step: j, volumeMl: vh, pH: ph });
    if (fit && result.pKa[j - 1] !== undefined) {
      const diff = ph - result.pKa[j - 1];
      if (Math.abs(diff) > Math.max(0.05, 3 * result.pKaU[j - 1])) {
        model.setPKa(fit.pKa);
        model.pHAt(vh, Cb * fit.ve1Ml, 0);
        const Ct = model.Ct;
        const h = model.h;
        const oh = Math.pow(10, -pkw) / h;
        let why = 'check the readings around half-equivalence';
        const near = (k: number) => k >= 0 && k < steps && Math.abs(fit!.pKa[k] - fit!.pKa[j - 1]) < 2.5;
        if (near(j - 2) || near(j)) why = 'neighbouring pKa values are less than 2.5 apart, so the steps overlap and more than two forms of the acid coexist at half-equivalence';
        if (h > 0.02 * Ct) why = `[H+] there is ${fmt((100 * h) / Ct, 1)} % of the acid's concentration (a stronger or more dilute acid), so the acid and its base are not equal at half-equivalence`;
        else if (oh > 0.02 * Ct) why = `[OH−] there is ${fmt((100 * oh) / Ct, 1)} % of the acid's concentration (a very weak step), so the acid and its base are not equal at half-equivalence`;
        warnings.push(`step ${j}: the half-equivalence pH ${fmt(ph)} differs from the fitted pKa ${fmt(result.pKa[j - 1])} by ${fmt(diff)}: ${why}; the fit's value accounts for this`);
      }
    }
  }

  // ---- derived results ----
  const z = doc.sample.acidProtons;
  const eqs = result.equivalencePoints;
  const eq = (z !== undefined ? eqs.find((e) => e.step === z) : undefined) ?? eqs[eqs.length - 1];
  if (z !== undefined && eq.step !== z) warnings.push(`no equivalence point for proton ${z} was found; derived results use step ${eq.step}`);
  const uCb = doc.titrant.uConcentrationM;
  if (uCb === undefined) warnings.push('titrant.uConcentrationM not given: the budgets leave out the titrant standardisation');
  const cbRow = { name: 'titrant concentration c(NaOH) (mol/L)', value: Cb, u: uCb ?? 0 };
  const veRow = { name: `equivalence volume Ve, step ${eq.step} (mL)`, value: eq.volumeMl, u: eq.uMl };
  // n(acid) = Cb·Ve/(1000·step) mol
  if (doc.sample.massG !== undefined) {
    const m = doc.sample.massG;
    const um = doc.sample.uMassG ?? DEFAULT_BALANCE_U_G;
    if (doc.sample.uMassG === undefined) warnings.push('sample.uMassG not given: 0.0001 g assumed (analytical balance, common practice)');
    const M = (1000 * m * eq.step) / (Cb * eq.volumeMl);
    const b = productBudget(M, [
      { name: 'sample mass m (g)', value: m, u: um, exponent: 1 },
      { ...cbRow, exponent: -1 },
      { ...veRow, exponent: -1 },
    ]);
    result.molarMassGPerMol = M;
    result.molarMassU = b.u;
    result.molarMassBudget = b.budget;
    if (doc.knownMolarMassGPerMol !== undefined) {
      const Mk = doc.knownMolarMassGPerMol;
      const P = Mk / M;
      const pb = productBudget(P, [
        { name: 'known molar mass (g/mol)', value: Mk, u: doc.uKnownMolarMassGPerMol ?? 0, exponent: 1 },
        { name: 'sample mass m (g)', value: m, u: um, exponent: -1 },
        { ...cbRow, exponent: 1 },
        { ...veRow, exponent: 1 },
      ]);
      result.purity = P;
      result.purityU = pb.u;
    }
  }
  {
    const c = (Cb * eq.volumeMl) / (eq.step * V0);
    const b = productBudget(c, [
      { ...cbRow, exponent: 1 },
      { ...veRow, exponent: 1 },
      { name: 'sample volume V0 (mL)', value: V0, u: doc.sample.uVolumeMl ?? 0, exponent: -1 },
    ]);
    result.analyteConcentrationM = c;
    result.analyteConcentrationU = b.u;
  }
  return result;
}

export type { BudgetRow };
