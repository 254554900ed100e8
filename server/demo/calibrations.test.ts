import { afterAll, expect, it } from 'vitest';
import { createServerContext } from '../auth/context';
import { overview } from '../services/calibrations';
import { closeTemplate, testDatabase } from '../testing/db';
import { seedDemo } from './seed';

afterAll(closeTemplate);

it('the demo seed holds a burette with an accepted gravimetric rate, a standardised lot and an electrode calibration in force, all labelled demo', async () => {
  const database = await testDatabase();
  try {
    const { labId } = await seedDemo(database);
    const o = await overview(createServerContext({ database, log: () => {} }), labId);
    const setting = o.burettes[0].settings[0];
    const rate = setting.calibrations.find((c) => c.id === setting.inForceId)!;
    expect(rate.method).toBe('gravimetric');
    expect(rate.rateMlPerS).toBeGreaterThan(0.019);
    expect(rate.rateMlPerS).toBeLessThan(0.021);
    expect(o.lots[0].current!.concentrationM).toBeGreaterThan(0.09);
    expect(o.lots[0].current!.concentrationM).toBeLessThan(0.11);
    const e = o.electrodes[0];
    expect(e.calibrations.find((c) => c.id === e.inForceId)!.slopePct).toBeCloseTo(98, 0);
    for (const x of [o.burettes[0], setting, rate, o.lots[0], o.lots[0].standardisations[0], e, e.calibrations[0]]) expect(x.isDemo).toBe(true);
    expect(o.burettes[0].identifier).toMatch(/^Demo/);
  } finally {
    await database.close();
  }
}, 180_000);
