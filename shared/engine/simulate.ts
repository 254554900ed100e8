// Forward model for planning and tests: pH along the titration, against volume and (with a drip rate) time.
import { simulateParamsSchema, type SimulateParams } from '../schemas/run-document';
import { parseOrThrow } from './errors';
import { ChargeBalanceModel, equivalenceVolumes } from './model';

export interface SimulatedCurve {
  points: { volumeMl: number; pH: number; timeS?: number }[];
  equivalence: { step: number; volumeMl: number; timeS?: number }[];
}

/** Delivered volume at time t for a constant or draining burette started at reading B0 (see delivery.ts). */
function deliveredAt(t: number, q: number, Vh: number | undefined, B0: number): number {
  if (Vh === undefined) return q * t;
  return (Vh - B0) * (1 - Math.exp((-q * t) / Vh));
}
function timeFor(v: number, q: number, Vh: number | undefined, B0: number): number | undefined {
  if (Vh === undefined) return v / q;
  const x = 1 - v / (Vh - B0);
  return x > 0 ? (-Vh / q) * Math.log(x) : undefined;
}

export function simulateCurve(params: SimulateParams): SimulatedCurve {
  const p = parseOrThrow(simulateParamsSchema, params);
  const model = new ChargeBalanceModel({
    sampleVolumeMl: p.sample.volumeMl,
    titrantM: p.titrant.concentrationM,
    carbonateM: p.titrant.carbonateM,
    temperatureC: p.temperatureC,
    activity: p.activity ?? 'none',
  });
  model.setPKa(p.acid.pKa);
  const amount = p.sample.amountMmol ?? (p.sample.concentrationM as number) * p.sample.volumeMl;
  const steps = p.acid.pKa.length;
  const veq = equivalenceVolumes(amount, p.titrant.concentrationM, steps);
  const del = p.delivery;
  const B0 = del?.startBuretteMl ?? 0;
  const offset = p.electrodeOffset ?? 0;
  const points: SimulatedCurve['points'] = [];
  if (p.timesS) {
    for (const t of p.timesS) {
      const v = deliveredAt(t, del!.rateMlPerS, del!.drainVolumeMl, B0);
      points.push({ volumeMl: v, pH: model.pHAt(v, amount, offset), timeS: t });
    }
  } else {
    let vols = p.volumesMl;
    if (!vols) {
      const max = p.maxVolumeMl ?? 1.5 * veq[veq.length - 1];
      const stepMl = p.stepMl ?? max / 200;
      vols = [];
      for (let k = 0; k * stepMl <= max + 1e-12; k++) vols.push(k * stepMl);
    }
    for (const v of vols) {
      const pt: { volumeMl: number; pH: number; timeS?: number } = { volumeMl: v, pH: model.pHAt(v, amount, offset) };
      if (del) pt.timeS = timeFor(v, del.rateMlPerS, del.drainVolumeMl, B0);
      points.push(pt);
    }
  }
  return {
    points,
    equivalence: veq.map((v, j) => ({ step: j + 1, volumeMl: v, ...(del ? { timeS: timeFor(v, del.rateMlPerS, del.drainVolumeMl, B0) } : {}) })),
  };
}
