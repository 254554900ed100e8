import { describe, expect, it } from 'vitest';
import { runDocumentSchema } from '../schemas/run-document';
import { buildDeliveryMap, timeToVolume } from './delivery';

/** RK4 integration of dV/dt = q0 (1 − V/Vh) from V(0) = B0: an independent check of the closed form. */
function integrateDrain(q0: number, Vh: number, B0: number, t: number): number {
  const f = (v: number) => q0 * (1 - v / Vh);
  let v = B0;
  const n = 2000;
  const h = t / n;
  for (let i = 0; i < n; i++) {
    const k1 = f(v), k2 = f(v + (h * k1) / 2), k3 = f(v + (h * k2) / 2), k4 = f(v + h * k3);
    v += (h * (k1 + 2 * k2 + 2 * k3 + k4)) / 6;
  }
  return v;
}

describe('time → volume map', () => {
  it('constant rate without checkpoints: V = q t, uncertainty from rate, one reading (0.02 mL, common practice) and class A tolerance/√3 (ISO 385, ASTM E287; GUM 4.3.7 rectangular)', () => {
    const m = buildDeliveryMap({ rateMlPerS: 0.05, uRateMlPerS: 0.0001 }, 600);
    expect(m.info.mode).toBe('calibration');
    expect(m.volumeAt(400)).toBeCloseTo(20, 12);
    expect(m.timeAt(20)).toBeCloseTo(400, 9);
    const expected = Math.sqrt(0.02 ** 2 + (0.05 / Math.sqrt(3)) ** 2 + (400 * 0.0001) ** 2);
    expect(m.uVolumeAt(400)).toBeCloseTo(expected, 12);
    expect(m.info.toleranceSource).toMatch(/ISO 385/);
  });

  it('drain model matches a numerical integration of dV/dt = q0 (1 − V/Vh) (RK4), from a start reading of 1.20 mL', () => {
    const m = buildDeliveryMap({ rateMlPerS: 0.06, drainVolumeMl: 80, checkpoints: [{ timeS: 0, buretteMl: 1.2 }] }, 900);
    for (const t of [60, 300, 600, 900]) {
      expect(m.volumeAt(t) + 1.2).toBeCloseTo(integrateDrain(0.06, 80, 1.2, t), 8);
      expect(m.timeAt(m.volumeAt(t))).toBeCloseTo(t, 8);
    }
  });

  it('two or more checkpoints decide the rate: a calibration 3 % off is corrected and the map passes within the reading uncertainty', () => {
    const qTrue = 0.0515;
    const cps = [0, 150, 300, 450, 600].map((t) => ({ timeS: t, buretteMl: Math.round(80 * (1 - Math.exp((-qTrue * t) / 80)) * 100) / 100 }));
    const m = buildDeliveryMap({ rateMlPerS: 0.05, drainVolumeMl: 80, checkpoints: cps }, 700);
    expect(m.info.mode).toBe('fitted-rate');
    expect(m.info.rateMlPerS).toBeCloseTo(qTrue, 4);
    for (const r of m.info.checkpointResiduals) expect(Math.abs(r.mapResidualMl)).toBeLessThanOrEqual(0.02);
    // the calibrated rate alone misses the last checkpoint by far more than a reading
    expect(Math.abs(m.info.checkpointResiduals[4].calibrationResidualMl)).toBeGreaterThan(0.3);
  });

  it('a rate that changes during the run gives a piecewise map through every checkpoint, with a warning', () => {
    const cps = [{ timeS: 0, buretteMl: 0 }, { timeS: 200, buretteMl: 10 }, { timeS: 400, buretteMl: 18 }];
    const m = buildDeliveryMap({ rateMlPerS: 0.05, checkpoints: cps }, 500);
    expect(m.info.mode).toBe('piecewise');
    for (const r of m.info.checkpointResiduals) expect(Math.abs(r.mapResidualMl)).toBeLessThan(1e-12);
    expect(m.volumeAt(300)).toBeCloseTo(14, 10);
    expect(m.volumeAt(500)).toBeCloseTo(22, 10); // the last interval's rate continues
    expect(m.warnings.join(' ')).toMatch(/drip rate changed/);
  });

  it('reports readings before the start checkpoint and keeps their volume at 0', () => {
    const r = timeToVolume({ rateMlPerS: 0.05, checkpoints: [{ timeS: 10, buretteMl: 0.5 }] }, [5, 10, 20]);
    expect(r.volumesMl).toEqual([0, 0, 0.5]);
    expect(r.warnings.join(' ')).toMatch(/before the start checkpoint/);
  });

  it('rejects decreasing burette readings and checkpoints out of time order (a refill must be its own segment)', () => {
    const base = { sample: { volumeMl: 25 }, titrant: { concentrationM: 0.1 }, readings: [{ timeS: 0, pH: 3 }] };
    const bad = runDocumentSchema.safeParse({ ...base, delivery: { rateMlPerS: 0.05, checkpoints: [{ timeS: 0, buretteMl: 10 }, { timeS: 100, buretteMl: 2 }] } });
    expect(bad.success).toBe(false);
    expect(bad.error!.issues[0].message).toMatch(/must not decrease/);
    const order = runDocumentSchema.safeParse({ ...base, delivery: { rateMlPerS: 0.05, checkpoints: [{ timeS: 100, buretteMl: 1 }, { timeS: 50, buretteMl: 2 }] } });
    expect(order.success).toBe(false);
    expect(order.error!.issues[0].message).toMatch(/must increase/);
  });
});
