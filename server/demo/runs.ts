import { createHash } from 'node:crypto';
import { analyzeRun, molarMass, simulateCurve } from '../../shared/engine';
import type { RunDocument } from '../../shared/schemas/run-document';
import type { Executor } from '../repos/executor';
import { like } from 'drizzle-orm';
import { checkpoints, readings, runs, users } from '../../db/schema';

/**
 * Invented demo runs (labelled demo everywhere): curves simulated with the engine's charge-balance model plus seeded
 * noise, so the logbook has something to show. The samples are ordinary weak acids; the numbers are not measurements.
 */

/** mulberry32: a small seeded generator, so demo data and benchmarks are the same on every start. */
export function seeded(seed: number) {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = () => Math.sqrt(-2 * Math.log(next() || 1e-12)) * Math.cos(2 * Math.PI * next());
  return { next, normal };
}

/** A uuid derived from a seed text, so demo ids are stable. */
export function demoId(text: string): string {
  const h = createHash('sha256').update(text).digest('hex');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-4${h.slice(13, 16)}-a${h.slice(17, 20)}-${h.slice(20, 32)}`;
}

export interface DemoSample {
  name: string;
  formula: string;
  pKa: number[];
  massG: number;
  lot: string;
}

// Thermodynamic pKa at 25 °C (I → 0): benzoic 4.204 and acetic 4.756 (CRC-style tables, as in Harvey's appendix),
// KHP's is phthalic acid's second, 5.408 (Kaye & Laby). The curves are simulated with Davies activities, as a real
// solution behaves and as the engine fits by default.
export const DEMO_SAMPLES: DemoSample[] = [
  { name: 'Benzoic acid, batch 7 (demo)', formula: 'C7H6O2', pKa: [4.204], massG: 0.2442, lot: 'NaOH-DEMO-A' },
  { name: 'KHP check standard (demo)', formula: 'C8H5KO4', pKa: [5.408], massG: 0.4085, lot: 'NaOH-DEMO-A' },
  { name: 'Acetic acid, unknown 3 (demo)', formula: 'C2H4O2', pKa: [4.756], massG: 0.1201, lot: 'NaOH-DEMO-B' },
  { name: 'Benzoic acid, batch 8 (demo)', formula: 'C7H6O2', pKa: [4.204], massG: 0.2380, lot: 'NaOH-DEMO-B' },
  { name: 'Acetic acid, unknown 4 (demo)', formula: 'C2H4O2', pKa: [4.756], massG: 0.1502, lot: 'NaOH-DEMO-A' },
];

export interface DemoRun {
  run: typeof runs.$inferInsert;
  readings: (typeof readings.$inferInsert)[];
  checkpoints: (typeof checkpoints.$inferInsert)[];
}

/** One simulated run: readings every ~6 s through 1.6 × Ve, pH noise σ 0.01, a slightly drifting drip rate. */
export function demoRun(opts: { labId: string; analystId: string; index: number; sample?: DemoSample; createdAt: Date; analyse?: boolean; status?: string }): DemoRun {
  const rnd = seeded(1000 + opts.index);
  const s = opts.sample ?? DEMO_SAMPLES[opts.index % DEMO_SAMPLES.length];
  const c = 0.1 + 0.002 * rnd.normal();
  const rate = 0.05 * (1 + 0.02 * rnd.normal());
  const amountMmol = (s.massG / molarMass(s.formula)) * 1000;
  const veq = amountMmol / c;
  const end = (1.6 * veq) / rate;
  const times: number[] = [];
  for (let t = 0; t < end; t += 5 + 2 * rnd.next()) times.push(Math.round(t * 10) / 10);
  const sim = simulateCurve({
    sample: { volumeMl: 50, amountMmol },
    acid: { pKa: s.pKa },
    titrant: { concentrationM: c },
    timesS: times,
    delivery: { rateMlPerS: rate },
    temperatureC: 25,
    activity: 'davies',
  });
  const id = demoId(`demo-run-${opts.labId}-${opts.index}`);
  const rs = sim.points.map((p, k) => ({
    id: demoId(`${id}-r${k}`),
    runId: id,
    labId: opts.labId,
    kind: 'reading',
    timeS: p.timeS!,
    pH: Math.round((p.pH + 0.01 * rnd.normal()) * 100) / 100,
    mV: null,
    receivedAt: new Date(opts.createdAt.getTime() + p.timeS! * 1000),
  }));
  const cps = [
    { id: demoId(`${id}-c0`), runId: id, labId: opts.labId, timeS: 0, buretteMl: 0.5, receivedAt: opts.createdAt },
    {
      id: demoId(`${id}-c1`),
      runId: id,
      labId: opts.labId,
      timeS: Math.round(end * 0.9),
      buretteMl: Math.round((0.5 + rate * end * 0.9 + 0.01 * rnd.normal()) * 100) / 100,
      receivedAt: opts.createdAt,
    },
  ];
  const setup = {
    sample: { volumeMl: 50, massG: s.massG, acidProtons: s.pKa.length },
    titrant: { source: 'manual', concentrationM: Math.round(c * 10000) / 10000, uConcentrationM: 0.0002, lotLabel: s.lot },
    delivery: { source: 'manual', rateMlPerS: Math.round(rate * 100000) / 100000, uRateMlPerS: 0.0005, startBuretteMl: 0.5 },
    temperatureC: 25,
    demo: true,
  };
  let result: unknown = null;
  if (opts.analyse !== false) {
    const doc: RunDocument = {
      sample: setup.sample,
      titrant: { concentrationM: setup.titrant.concentrationM, uConcentrationM: 0.0002 },
      temperatureC: 25,
      delivery: { rateMlPerS: setup.delivery.rateMlPerS, uRateMlPerS: 0.0005, checkpoints: cps.map((p) => ({ timeS: p.timeS, buretteMl: p.buretteMl })) },
      readings: rs.map((r) => ({ timeS: r.timeS, pH: r.pH })),
    } as RunDocument;
    try {
      result = analyzeRun(doc);
    } catch {
      result = null;
    }
  }
  return {
    run: {
      id,
      labId: opts.labId,
      analystId: opts.analystId,
      sampleName: s.name,
      status: opts.status ?? 'finished',
      setup,
      result,
      notes: 'Demo run: simulated curve with invented noise.',
      isDemo: true,
      createdAt: opts.createdAt,
      updatedAt: opts.createdAt,
    },
    readings: rs,
    checkpoints: cps,
  };
}

export async function insertDemoRun(tx: Executor, r: DemoRun): Promise<void> {
  await tx.insert(runs).values(r.run);
  for (let i = 0; i < r.readings.length; i += 500) await tx.insert(readings).values(r.readings.slice(i, i + 500));
  await tx.insert(checkpoints).values(r.checkpoints);
}

/** The demo lab's runs: a handful by the demo analyst and manager (found by their demo e-mail), some submitted. */
export async function seedDemoRuns(tx: Executor, labId: string, now = new Date()): Promise<number> {
  const people = await tx.select({ id: users.id, email: users.email }).from(users).where(like(users.email, '%@demo.halfmark.test'));
  const analystId = people.find((p) => p.email.startsWith('analyst@'))?.id;
  const managerId = people.find((p) => p.email.startsWith('manager@'))?.id ?? analystId;
  if (!analystId || !managerId) return 0;
  const statuses = ['finished', 'submitted', 'finished', 'submitted', 'recording', 'finished'];
  for (let i = 0; i < statuses.length; i++) {
    const createdAt = new Date(now.getTime() - (statuses.length - i) * 86_400_000);
    await insertDemoRun(tx, demoRun({ labId, analystId: i % 3 === 2 ? managerId : analystId, index: i, createdAt, status: statuses[i] }));
  }
  return statuses.length;
}
