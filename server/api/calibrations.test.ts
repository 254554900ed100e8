import quamA2 from '../../shared/engine/fixtures/standardize-quam-a2.json';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '../../db/schema';
import { eq } from 'drizzle-orm';
import { gravimetricDripRate } from '../../shared/calibration/gravimetric';
import { nernstSlopeMvPerPH } from '../../shared/calibration/electrode';
import type { CalibrationOverview } from '../../shared/schemas/calibration-api';
import { authFixture, type AuthFixture } from '../auth/test-fixture';
import { closeTemplate } from '../testing/db';

let fx: AuthFixture;
const tokens: Record<string, string> = {};

/** Access tokens are short-lived: mint them again after the test clock moves. */
async function signIn() {
  for (const who of ['manager', 'analyst', 'viewer', 'managerB'] as const) {
    tokens[who] = (await fx.session(fx.people[who].id)).accessToken;
  }
}

beforeAll(async () => {
  fx = await authFixture();
  await signIn();
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

const as = (who: keyof typeof tokens) => ({
  get: (p: string) => fx.api().get(`/api${p}`).set('authorization', `Bearer ${tokens[who]}`),
  post: (p: string, body: object) => fx.api().post(`/api${p}`).set('authorization', `Bearer ${tokens[who]}`).send(body),
  patch: (p: string, body: object) => fx.api().patch(`/api${p}`).set('authorization', `Bearer ${tokens[who]}`).send(body),
  put: (p: string, body: object) => fx.api().put(`/api${p}`).set('authorization', `Bearer ${tokens[who]}`).send(body),
});
const lab = () => `/labs/${fx.labA.id}`;
const overview = async (who = 'viewer'): Promise<CalibrationOverview> => {
  const r = await as(who).get(`${lab()}/calibrations`);
  expect(r.status).toBe(200);
  return r.body;
};

// Eurachem/CITAC QUAM (3rd ed., 2012), example A2: standardising NaOH with KHP.
const QUAM_A2 = quamA2;

describe('calibrations API', () => {
  let buretteId: string;
  let settingId: string;
  let lotId: string;
  let electrodeId: string;

  it('a manager registers a burette; the tolerance comes from the ISO 385:2005 / ASTM E287 table (50 mL class A ±0.05 mL)', async () => {
    const r = await as('manager').post(`${lab()}/burettes`, { identifier: 'BU-50-01', capacityMl: 50, class: 'A' });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    expect(r.body.toleranceMl).toBe(0.05);
    expect(r.body.toleranceSource).toBe('ISO 385:2005, ASTM E287');
    buretteId = r.body.id;
    const dup = await as('manager').post(`${lab()}/burettes`, { identifier: 'bu-50-01', capacityMl: 50, class: 'A' });
    expect(dup.status).toBe(409);
    const untabled = await as('manager').post(`${lab()}/burettes`, { identifier: 'BU-100', capacityMl: 100, class: 'B' });
    expect(untabled.status).toBe(400);
    expect(untabled.body.error.code).toBe('tolerance_needed');
    const s = await as('manager').post(`${lab()}/burettes/${buretteId}/drip-settings`, { stopcockSetting: '¼ turn', tip: 'standard' });
    expect(s.status).toBe(201);
    settingId = s.body.id;
  });

  it('the server computes the gravimetric rate itself (a client-sent result is ignored) and judges repeatability', async () => {
    const deliveries = [
      { massG: 4.985, durationS: 250.0, waterTempC: 21.5 },
      { massG: 4.991, durationS: 250.4, waterTempC: 21.5 },
      { massG: 4.979, durationS: 249.7, waterTempC: 21.6 },
    ];
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, {
      method: 'gravimetric',
      inputs: { deliveries },
      rateMlPerS: 1, // not part of the schema: stripped, never trusted
    });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const expected = gravimetricDripRate(deliveries);
    expect(r.body.rateMlPerS).toBeCloseTo(expected.rateMlPerS, 12);
    expect(r.body.uRateMlPerS).toBeCloseTo(expected.uRateMlPerS, 12);
    expect(r.body.rateMlPerS).toBeCloseTo(0.02, 3); // ≈ 5 mL in 250 s
    expect(r.body.accepted).toBe(true);
    expect(r.body.performedByName).toBe(fx.people.manager.displayName);
  });

  it('a poorly repeatable series is stored but fails acceptance, and does not come into force', async () => {
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, {
      method: 'gravimetric',
      inputs: { deliveries: [{ massG: 4.0, durationS: 250, waterTempC: 21 }, { massG: 5.0, durationS: 250, waterTempC: 21 }, { massG: 4.5, durationS: 250, waterTempC: 21 }] },
    });
    expect(r.status).toBe(201);
    expect(r.body.accepted).toBe(false);
    expect(r.body.acceptanceReasons[0]).toMatch(/relative SD/);
    const o = await overview();
    const setting = o.burettes[0].settings[0];
    expect(setting.calibrations).toHaveLength(2);
    const inForce = setting.calibrations.find((c) => c.id === setting.inForceId)!;
    expect(inForce.accepted).toBe(true);
    expect(setting.calibrations.find((c) => c.id === r.body.id)!.status).toBe('failed');
  });

  it('a newer accepted calibration supersedes the older one; both stay in the history', async () => {
    const before = (await overview()).burettes[0].settings[0].inForceId;
    fx.advance(60_000);
    await signIn();
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, {
      method: 'gravimetric',
      inputs: { deliveries: [1, 2, 3].map(() => ({ massG: 5.1, durationS: 250, waterTempC: 20 })) },
    });
    expect(r.status).toBe(201);
    const s = (await overview()).burettes[0].settings[0];
    expect(s.inForceId).toBe(r.body.id);
    expect(s.calibrations.find((c) => c.id === before)!.status).toBe('superseded');
    expect(s.calibrations).toHaveLength(3);
  });

  it('mark timing: the drain fit and the rate drop top → bottom are computed by the server', async () => {
    // Taps generated from the drain model dV/dt = q0 (1 − V/Vh) with q0 = 0.05 mL/s, Vh = 100 mL (model physics).
    const q0 = 0.05;
    const Vh = 100;
    const points = [0, 5, 10, 15, 20, 25, 30, 35, 40].map((v) => ({ buretteMl: v, timeS: (-Vh / q0) * Math.log(1 - v / Vh) }));
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, { method: 'mark-timing', inputs: { points } });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    expect(r.body.rateMlPerS).toBeCloseTo(q0, 6);
    expect(r.body.drainVolumeMl).toBeCloseTo(Vh, 3);
    expect((r.body.result as { dropPct: number }).dropPct).toBeCloseTo(40, 3);
  });

  it('drop counter: drops/min, and the drop volume from the rate in force of the same setting', async () => {
    const taps = Array.from({ length: 21 }, (_, i) => i * 2.5); // 20 drops in 50 s → 24 drops/min
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, { method: 'drop-count', inputs: { tapTimesS: taps } });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    expect(r.body.dropsPerMin).toBeCloseTo(24, 10);
    const s = (await overview()).burettes[0].settings[0];
    const rate = s.calibrations.find((c) => c.id === s.inForceId)!.rateMlPerS!;
    expect(r.body.dropVolumeMl).toBeCloseTo((rate * 60) / 24, 10);
    expect(s.inForceDropCountId).toBe(r.body.id);
  });

  it('bad measurements answer 400 naming the problem, and nothing is stored', async () => {
    const n = (await overview()).burettes[0].settings[0].calibrations.length;
    const r = await as('manager').post(`${lab()}/drip-settings/${settingId}/calibrations`, {
      method: 'gravimetric',
      inputs: { deliveries: [{ massG: -1, durationS: 0, waterTempC: 21 }] },
    });
    expect(r.status).toBe(400);
    expect(r.body.error.code).toBe('invalid_input');
    expect(JSON.stringify(r.body.error.details)).toMatch(/massG/);
    expect((await overview()).burettes[0].settings[0].calibrations).toHaveLength(n);
  });

  it('titrant lot + standardisation through the API reproduce QUAM A2: 0.10214 mol/L, u 0.00010 mol/L', async () => {
    const l = await as('manager').post(`${lab()}/titrant-lots`, {
      identifier: 'NaOH-2026-03-A',
      nominalConcentrationM: 0.1,
      preparedAt: '2026-03-01T09:00:00Z',
      storage: 'polyethylene, soda-lime guard tube',
    });
    expect(l.status, JSON.stringify(l.body)).toBe(201);
    lotId = l.body.id;
    const s = await as('manager').post(`${lab()}/titrant-lots/${lotId}/standardisations`, QUAM_A2);
    expect(s.status, JSON.stringify(s.body)).toBe(201);
    // Eurachem/CITAC QUAM (3rd ed., 2012) A2
    expect(s.body.concentrationM).toBeCloseTo(0.10214, 5);
    expect(s.body.uConcentrationM).toBeCloseTo(0.0001, 5);
    expect(s.body.budget).toHaveLength(5);
    const lotOut = (await overview()).lots.find((x) => x.id === lotId)!;
    expect(lotOut.current!.n).toBe(1);
    expect(lotOut.current!.concentrationM).toBeCloseTo(0.10214, 5);
  });

  it('replicate standardisations are combined into the lot’s current concentration; a withdrawn one drops out', async () => {
    const s2 = await as('manager').post(`${lab()}/titrant-lots/${lotId}/standardisations`, { ...QUAM_A2, massG: 0.4012, equivalenceVolumeMl: 19.24 });
    expect(s2.status).toBe(201);
    let lotOut = (await overview()).lots.find((x) => x.id === lotId)!;
    expect(lotOut.current!.n).toBe(2);
    // The two replicates' own concentrations, as the API lists them.
    const reps = lotOut.standardisations.filter((x) => lotOut.current!.standardisationIds.includes(x.id));
    expect(reps).toHaveLength(2);
    expect(reps.map((x) => x.id)).toContain(s2.body.id);
    expect(reps.find((x) => x.id === s2.body.id)!.concentrationM).toBe(s2.body.concentrationM);
    const [c1, c2] = reps.map((x) => x.concentrationM);
    // A different mass and volume: a different concentration, so the mean is distinguishable from either replicate.
    expect(Math.abs(c1 - c2) / c1).toBeGreaterThan(1e-4);
    // GUM (JCGM 100:2008) 4.2.1 (clause from memory): the arithmetic mean of the replicates, to ~10 significant digits.
    const expected = (c1 + c2) / 2;
    const got = lotOut.current!.concentrationM;
    expect(Math.abs(got - expected) / expected).toBeLessThan(1e-10);
    for (const c of [c1, c2]) expect(Math.abs(got - c) / c).toBeGreaterThan(1e-5);
    const w = await as('manager').patch(`/labs/${fx.labA.id}/standardisations/${s2.body.id}`, { withdraw: { reason: 'KHP not dried' } });
    expect(w.status, JSON.stringify(w.body)).toBe(200);
    lotOut = (await overview()).lots.find((x) => x.id === lotId)!;
    expect(lotOut.current!.n).toBe(1);
    expect(lotOut.standardisations.find((x) => x.id === s2.body.id)!.status).toBe('withdrawn');
    const again = await as('manager').patch(`/labs/${fx.labA.id}/standardisations/${s2.body.id}`, { withdraw: { reason: 'twice' } });
    expect(again.status).toBe(409);
  });

  it('electrode: IUPAC buffers at the temperature → slope % of Nernst (CODATA 2018) and offset at pH 7; lab limits judge it', async () => {
    const e = await as('manager').post(`${lab()}/electrodes`, { identifier: 'GE-1', description: 'combination glass electrode' });
    expect(e.status).toBe(201);
    electrodeId = e.body.id;
    // An ideal electrode at 25 °C: E = 5 − 59.159·(pH − 7) mV, Nernst slope 59.159 mV/pH (check-values.md, CODATA 2018).
    const S = nernstSlopeMvPerPH(25);
    expect(S).toBeCloseTo(59.159, 3);
    // Buck et al. 2002 (values memory): KHP 4.005, phosphate 6.865, borax 9.180 at 25 °C.
    const points = [
      { buffer: 'KHP', mV: 5 - S * (4.005 - 7) },
      { buffer: 'phosphate', mV: 5 - S * (6.865 - 7) },
      { buffer: 'borax', mV: 5 - S * (9.18 - 7) },
    ];
    const r = await as('manager').post(`${lab()}/electrodes/${electrodeId}/calibrations`, { temperatureC: 25, points });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    expect(r.body.slopePct).toBeCloseTo(100, 2);
    expect(r.body.offsetMv).toBeCloseTo(5, 2);
    expect(r.body.accepted).toBe(true);
    // Tighten the lab's offset limit: the same readings now fail.
    const put = await as('manager').put(`${lab()}/calibration-settings`, { electrodeMaxAbsOffsetMv: 3 });
    expect(put.status).toBe(200);
    const r2 = await as('manager').post(`${lab()}/electrodes/${electrodeId}/calibrations`, { temperatureC: 25, points });
    expect(r2.body.accepted).toBe(false);
    expect(r2.body.acceptanceReasons.join(' ')).toMatch(/offset/);
    const el = (await overview()).electrodes.find((x) => x.id === electrodeId)!;
    expect(el.inForceId).toBe(r.body.id);
    await as('manager').put(`${lab()}/calibration-settings`, { electrodeMaxAbsOffsetMv: 30 });
  });

  it('an expired electrode calibration is no longer in force (lab age: 24 h by default)', async () => {
    const before = (await overview()).electrodes.find((x) => x.id === electrodeId)!;
    expect(before.inForceId).not.toBeNull();
    fx.advance(25 * 3_600_000);
    await signIn();
    const after = (await overview()).electrodes.find((x) => x.id === electrodeId)!;
    expect(after.inForceId).toBeNull();
    expect(after.calibrations.find((c) => c.id === before.inForceId)!.status).toBe('expired');
  });

  it('an analyst (and a viewer) cannot create or change a calibration: 403, and nothing is stored', async () => {
    const o = await overview('analyst');
    const n = o.burettes[0].settings[0].calibrations.length;
    const body = { method: 'gravimetric', inputs: { deliveries: [{ massG: 5, durationS: 250, waterTempC: 20 }] } };
    for (const who of ['analyst', 'viewer'] as const) {
      expect((await as(who).post(`${lab()}/drip-settings/${settingId}/calibrations`, body)).status).toBe(403);
      const calId = o.burettes[0].settings[0].calibrations[0].id;
      expect((await as(who).patch(`${lab()}/drip-calibrations/${calId}`, { withdraw: { reason: 'no right' } })).status).toBe(403);
      expect((await as(who).post(`${lab()}/titrant-lots/${lotId}/standardisations`, QUAM_A2)).status).toBe(403);
      expect((await as(who).post(`${lab()}/electrodes/${electrodeId}/calibrations`, { temperatureC: 25, points: [{ pH: 4, mV: 170 }, { pH: 7, mV: 0 }] })).status).toBe(403);
      expect((await as(who).put(`${lab()}/calibration-settings`, { electrodeMaxAbsOffsetMv: 100 })).status).toBe(403);
    }
    const after = await overview('analyst');
    expect(after.burettes[0].settings[0].calibrations).toHaveLength(n);
    expect(after.burettes[0].settings[0].calibrations.every((c) => c.status !== 'withdrawn')).toBe(true);
    expect(after.settings.electrodeMaxAbsOffsetMv).toBe(30);
  });

  it("another lab's records answer 404, even to a manager of that other lab using this lab's ids", async () => {
    const labB = `/labs/${fx.labB.id}`;
    // Lab B's manager, with lab A's setting id under lab B's path: not found.
    const r = await as('managerB').post(`${labB}/drip-settings/${settingId}/calibrations`, {
      method: 'gravimetric',
      inputs: { deliveries: [{ massG: 5, durationS: 250, waterTempC: 20 }] },
    });
    expect(r.status).toBe(404);
    expect((await as('managerB').get(`${lab()}/calibrations`)).status).toBe(404);
    expect((await as('managerB').post(`${labB}/titrant-lots/${lotId}/standardisations`, QUAM_A2)).status).toBe(404);
    const o = await as('managerB').get(`${labB}/calibrations`);
    expect(o.body.burettes).toEqual([]);
  });

  it('every change is in the audit log', async () => {
    const rows = await fx.database.db.select().from(auditLog).where(eq(auditLog.labId, fx.labA.id));
    const actions = new Set(rows.map((r) => r.action));
    for (const a of [
      'burette.create',
      'drip-setting.create',
      'drip-calibration.create',
      'titrant-lot.create',
      'standardisation.create',
      'standardisation.withdraw',
      'electrode.create',
      'electrode-calibration.create',
      'calibration-settings.update',
    ]) {
      expect(actions, a).toContain(a);
    }
  });
});
