// Builds the inputs of the whole-curve fit exactly as analyzeRun does (volumes from the delivery map, effective-
// variance weights from the Savitzky–Golay slope, the derivative break and half-equivalence start), so an outside
// optimiser (scipy, see scipy_fit.py) can be run on the same data and model. Pure TypeScript; the tests and the
// benchmark do the spawning.
import { runDocumentSchema, type RunDocumentInput } from '../../schemas/run-document';
import { daviesA, pKw } from '../constants';
import { timeToVolume } from '../delivery';
import { effectiveWeights, fitCurve } from '../fit';
import { ChargeBalanceModel } from '../model';
import { localPolyValue, savitzkyGolay } from '../savgol';

/** `ve1Guess` replaces the steepest-reading start for curves whose steepest break is not the first. */
export function fitProblem(input: RunDocumentInput, steps = 1, ve1Guess?: number) {
  const doc = runDocumentSchema.parse(input);
  const T = doc.temperatureC ?? 25;
  const activity = doc.activity ?? 'davies';
  const times = doc.readings.map((r) => r.timeS);
  const pH = doc.readings.map((r) => r.pH);
  const tv = timeToVolume(doc.delivery, times);
  const V = tv.volumesMl;
  const sg = savitzkyGolay(V, pH, 2, 2);
  const w = effectiveWeights(sg.d1, times.map((t) => tv.deliveryMap.rateAt(t)), 0.01, 0.2);
  // start: volume of the steepest reading, pKa guesses from the pH at (j − ½)·Ve1
  let k = 1;
  for (let i = 1; i < V.length - 1; i++) if (sg.d1[i] > sg.d1[k]) k = i;
  const ve1 = ve1Guess ?? V[k];
  const pKa = Array.from({ length: steps }, (_, j) => localPolyValue(V, pH, (j + 0.5) * ve1));
  const setup = { sampleVolumeMl: doc.sample.volumeMl, titrantM: doc.titrant.concentrationM, temperatureC: T, activity };
  const payload = { steps, V0: setup.sampleVolumeMl, Cb: setup.titrantM, pKw: pKw(T), A: daviesA(T), activity, V, pH, w: Array.from(w), start: [...pKa, ve1] };
  const ours = () => fitCurve(new ChargeBalanceModel(setup), V, pH, w, { pKa, ve1Ml: ve1 });
  return { payload, ours };
}
export type FitProblem = ReturnType<typeof fitProblem>;
