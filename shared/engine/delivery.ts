// Time → delivered volume for a burette on a steady drip.
//
// Shape: constant rate B(t) = B0 + q (t − t0), or the gravity drain model dB/dt = q0 (1 − B/Vh) with B the burette
// reading (mL below the zero mark): B(t) = Vh − (Vh − B0) exp(−q (t − t0)/Vh). The calibration gives q0 and Vh.
// Checkpoints {timeS, buretteMl} are readings during the run, the first one the start reading:
//   none or one  → 'calibration': the calibrated rate from the start reading (0 mL at t = 0 when none is given);
//   two or more  → one rate fitted to all checkpoints ('fitted-rate'); if that leaves any checkpoint further off than
//                  its reading uncertainty, each interval between checkpoints gets its own rate so the map passes
//                  through every checkpoint ('piecewise'). Beyond the last checkpoint the last rate continues.
// Refills are not modelled: times must exclude pauses, and burette readings may not decrease. A refill would be
// expressed as two runs (or, later, as a checkpoint pair before/after with a new start reading).
import type { Delivery, DeliveryMapInfo } from '../schemas/run-document';
import { DEFAULT_BURETTE_TOLERANCE_ML, DEFAULT_BURETTE_TOLERANCE_SOURCE, DEFAULT_READING_UNCERTAINTY_ML } from './constants';

interface Segment {
  t0: number;
  B0: number;
  q: number;
  /** standard uncertainty of q for extrapolation beyond the segment's own checkpoints */
  uq: number;
  tEnd: number;
}

export interface DeliveryMap {
  info: DeliveryMapInfo;
  /** Delivered volume (mL) since the start reading at time t (s). */
  volumeAt(t: number): number;
  /** Time (s) at which `delivered` mL have been delivered. */
  timeAt(delivered: number): number;
  /** Standard uncertainty (mL) of the delivered volume at time t. */
  uVolumeAt(t: number): number;
  /** d(delivered)/dt at time t (mL/s). */
  rateAt(t: number): number;
  warnings: string[];
}

/** Burette reading at t along a segment. */
function readingAt(seg: Segment, t: number, Vh: number | undefined): number {
  const dt = t - seg.t0;
  if (Vh === undefined) return seg.B0 + seg.q * dt;
  return Vh - (Vh - seg.B0) * Math.exp((-seg.q * dt) / Vh);
}
/** ∂B/∂q along a segment. */
function dReadingDq(seg: Segment, t: number, Vh: number | undefined): number {
  const dt = t - seg.t0;
  if (Vh === undefined) return dt;
  return (Vh - seg.B0) * (dt / Vh) * Math.exp((-seg.q * dt) / Vh);
}
/** Rate joining two readings with the shape. */
function rateBetween(t0: number, B0: number, t1: number, B1: number, Vh: number | undefined): number {
  if (Vh === undefined) return (B1 - B0) / (t1 - t0);
  return (-Vh / (t1 - t0)) * Math.log((Vh - B1) / (Vh - B0));
}

export function buildDeliveryMap(delivery: Delivery, endTimeS?: number): DeliveryMap {
  const Vh = delivery.drainVolumeMl;
  const uRead = delivery.readingUncertaintyMl ?? DEFAULT_READING_UNCERTAINTY_ML;
  const tol = delivery.buretteToleranceMl ?? DEFAULT_BURETTE_TOLERANCE_ML;
  const tolSource = delivery.buretteToleranceMl === undefined ? DEFAULT_BURETTE_TOLERANCE_SOURCE : `given tolerance ±${tol} mL`;
  // Rectangular distribution for a maximum permissible error (GUM 4.3.7).
  const uTol = tol / Math.sqrt(3);
  const q0 = delivery.rateMlPerS;
  const uq0 = delivery.uRateMlPerS ?? 0;
  const cps = delivery.checkpoints ?? [];
  const warnings: string[] = [];
  const start = cps.length > 0 ? cps[0] : { timeS: 0, buretteMl: 0 };
  const tEndAll = Math.max(endTimeS ?? start.timeS, cps.length ? cps[cps.length - 1].timeS : start.timeS);
  if (delivery.uRateMlPerS === undefined && cps.length < 2) {
    warnings.push('delivery.uRateMlPerS not given: the volume uncertainty leaves out the drip-rate calibration');
  }

  const calSeg: Segment = { t0: start.timeS, B0: start.buretteMl, q: q0, uq: uq0, tEnd: tEndAll };
  let mode: DeliveryMapInfo['mode'] = 'calibration';
  let segments: Segment[] = [calSeg];

  if (cps.length >= 2) {
    // One rate for all checkpoints (least squares in q; Gauss–Newton from the calibrated rate).
    const seg: Segment = { t0: start.timeS, B0: start.buretteMl, q: q0, uq: 0, tEnd: tEndAll };
    for (let it = 0; it < 50; it++) {
      let num = 0;
      let den = 0;
      for (let k = 1; k < cps.length; k++) {
        const g = dReadingDq(seg, cps[k].timeS, Vh);
        num += g * (cps[k].buretteMl - readingAt(seg, cps[k].timeS, Vh));
        den += g * g;
      }
      const dq = num / den;
      seg.q += dq;
      if (Math.abs(dq) <= 1e-14 * Math.abs(seg.q)) break;
    }
    let den = 0;
    let maxRes = 0;
    for (let k = 1; k < cps.length; k++) {
      const g = dReadingDq(seg, cps[k].timeS, Vh);
      den += g * g;
      maxRes = Math.max(maxRes, Math.abs(readingAt(seg, cps[k].timeS, Vh) - cps[k].buretteMl));
    }
    // each residual carries two readings (start and checkpoint)
    seg.uq = (uRead * Math.SQRT2) / Math.sqrt(den);
    if (maxRes <= uRead * Math.SQRT2) {
      mode = 'fitted-rate';
      segments = [seg];
    } else {
      mode = 'piecewise';
      segments = [];
      for (let k = 0; k + 1 < cps.length; k++) {
        const q = rateBetween(cps[k].timeS, cps[k].buretteMl, cps[k + 1].timeS, cps[k + 1].buretteMl, Vh);
        const s: Segment = { t0: cps[k].timeS, B0: cps[k].buretteMl, q, uq: 0, tEnd: cps[k + 1].timeS };
        s.uq = (uRead * Math.SQRT2) / Math.abs(dReadingDq(s, cps[k + 1].timeS, Vh));
        segments.push(s);
      }
      segments[segments.length - 1].tEnd = Math.max(tEndAll, cps[cps.length - 1].timeS);
      warnings.push(
        `the drip rate changed during the run: one rate misses a checkpoint by ${maxRes.toFixed(3)} mL (more than the ${(uRead * Math.SQRT2).toFixed(3)} mL two readings allow), so each interval between checkpoints uses its own rate`,
      );
    }
    const q1 = segments[segments.length - 1].q;
    if (Math.abs(q1 - q0) > 0.05 * q0) {
      warnings.push(`the checkpoints give a drip rate ${(q1 * 1000).toFixed(2)} µL/s, ${(((q1 - q0) / q0) * 100).toFixed(1)} % from the calibrated ${(q0 * 1000).toFixed(2)} µL/s: consider recalibrating`);
    }
  }

  const segFor = (t: number): Segment => {
    for (let i = 0; i < segments.length - 1; i++) if (t <= segments[i].tEnd) return segments[i];
    return segments[segments.length - 1];
  };
  const lastCpTime = cps.length ? cps[cps.length - 1].timeS : start.timeS;
  const firstSegStart = segments[0].t0;

  const volumeAt = (t: number) => readingAt(segFor(t), t, Vh) - start.buretteMl;
  const rateAt = (t: number) => {
    const s = segFor(t);
    return Vh === undefined ? s.q : (s.q * (Vh - readingAt(s, t, Vh))) / Vh;
  };
  const uVolumeAt = (t: number) => {
    const s = segFor(t);
    let u2 = uRead * uRead + uTol * uTol; // start reading + burette tolerance
    if (mode === 'calibration') {
      const g = dReadingDq(s, t, Vh) * s.uq;
      u2 += g * g;
    } else if (mode === 'fitted-rate') {
      const g = dReadingDq(s, t, Vh) * s.uq;
      u2 += g * g;
    } else if (t <= lastCpTime) {
      u2 += uRead * uRead; // interpolation between two read checkpoints
    } else {
      const g = dReadingDq(s, t, Vh) * s.uq;
      u2 += g * g;
    }
    return Math.sqrt(u2);
  };
  const timeAt = (delivered: number) => {
    const B = delivered + start.buretteMl;
    for (let i = 0; i < segments.length; i++) {
      const s = segments[i];
      const last = i === segments.length - 1;
      if (last || readingAt(s, s.tEnd, Vh) >= B) {
        if (Vh === undefined) return s.t0 + (B - s.B0) / s.q;
        if (B >= Vh) return Infinity;
        return s.t0 - (Vh / s.q) * Math.log((Vh - B) / (Vh - s.B0));
      }
    }
    return NaN;
  };

  const info: DeliveryMapInfo = {
    mode,
    shape: Vh === undefined ? 'constant' : 'drain',
    rateMlPerS: segments[segments.length - 1].q,
    drainVolumeMl: Vh ?? null,
    startBuretteMl: start.buretteMl,
    startTimeS: start.timeS,
    segments: segments.map((s, i) => ({ fromTimeS: i === 0 ? firstSegStart : s.t0, toTimeS: s.tEnd, rateMlPerS: s.q })),
    checkpointResiduals: cps.map((c) => ({
      timeS: c.timeS,
      buretteMl: c.buretteMl,
      calibrationResidualMl: readingAt(calSeg, c.timeS, Vh) - c.buretteMl,
      mapResidualMl: volumeAt(c.timeS) + start.buretteMl - c.buretteMl,
    })),
    buretteToleranceMl: tol,
    toleranceSource: tolSource,
    readingUncertaintyMl: uRead,
  };
  return { info, volumeAt, timeAt, uVolumeAt, rateAt, warnings };
}

/** Delivered volumes and their standard uncertainties at the given reading times, with the map used. */
export function timeToVolume(delivery: Delivery, readingsTimes: ArrayLike<number>) {
  const n = readingsTimes.length;
  const map = buildDeliveryMap(delivery, n ? readingsTimes[n - 1] : undefined);
  const volumesMl: number[] = new Array(n);
  const uVolumesMl: number[] = new Array(n);
  let before = 0;
  for (let i = 0; i < n; i++) {
    const t = readingsTimes[i];
    if (t < map.info.startTimeS) before++;
    volumesMl[i] = Math.max(0, map.volumeAt(t));
    uVolumesMl[i] = map.uVolumeAt(t);
  }
  const warnings = map.warnings.slice();
  if (before) warnings.push(`${before} reading(s) come before the start checkpoint; they are taken as 0 mL delivered`);
  return { volumesMl, uVolumesMl, map: map.info, deliveryMap: map, warnings };
}
