// Demo calibrations for the demo lab: an invented burette with a drip setting and a gravimetric calibration, a NaOH
// lot with a KHP standardisation, and an electrode calibration. All figures are invented for the demo (computed with
// the shared science, as the API would) and flagged is_demo.
import { and, eq } from 'drizzle-orm';
import { memberships } from '../../db/schema';
import { calibrateElectrode, nernstSlopeMvPerPH } from '../../shared/calibration/electrode';
import { checkRepeatability, gravimetricDripRate } from '../../shared/calibration/gravimetric';
import { standardiseWithDefaults } from '../../shared/calibration/standardisation';
import { readLabCalibrationSettings } from '../../shared/schemas/calibration-api';
import * as repo from '../repos/calibrations';
import type { Executor } from '../repos/executor';

const HOUR = 3_600_000;
const DAY = 24 * HOUR;

export async function seedDemoCalibrations(tx: Executor, labId: string, now = new Date()): Promise<void> {
  const [manager] = await tx
    .select({ userId: memberships.userId })
    .from(memberships)
    .where(and(eq(memberships.labId, labId), eq(memberships.role, 'manager')));
  const by = manager?.userId ?? null;
  const s = readLabCalibrationSettings(await repo.labSettings(tx, labId));

  const burette = await repo.insertBurette(tx, {
    labId, identifier: 'Demo burette 50 mL A-07', capacityMl: 50, class: 'A', toleranceMl: 0.05,
    toleranceSource: 'ISO 385:2005, ASTM E287', notes: 'Demo: invented burette.', isDemo: true, createdBy: by,
  });
  const setting = await repo.insertDripSetting(tx, {
    labId, buretteId: burette.id, stopcockSetting: 'Demo: stopcock ¼ turn', tip: 'standard glass tip', isDemo: true, createdBy: by,
  });
  const deliveries = [
    { massG: 4.962, durationS: 248.6, waterTempC: 21.4, airPressureHPa: 1008, relativeHumidityPct: 45 },
    { massG: 4.978, durationS: 249.5, waterTempC: 21.4, airPressureHPa: 1008, relativeHumidityPct: 45 },
    { massG: 4.955, durationS: 248.1, waterTempC: 21.5, airPressureHPa: 1008, relativeHumidityPct: 45 },
  ];
  const grav = gravimetricDripRate(deliveries);
  const acc = checkRepeatability(grav, { maxRelSdPct: s.gravimetricMaxRelSdPct, minReplicates: s.gravimetricMinReplicates });
  const gravAt = new Date(now.getTime() - 2 * DAY);
  await repo.insertDripCalibration(tx, {
    labId, dripSettingId: setting.id, method: 'gravimetric', inputs: { deliveries }, result: grav,
    rateMlPerS: grav.rateMlPerS, uRateMlPerS: grav.uRateMlPerS, deliveredVolumeMl: grav.volumeMl,
    accepted: acc.accepted, acceptanceReasons: acc.reasons, performedAt: gravAt, performedBy: by,
    expiresAt: new Date(gravAt.getTime() + s.dripRateMaxAgeDays * DAY), notes: 'Demo: invented deliveries.', isDemo: true,
  });

  const lot = await repo.insertLot(tx, {
    labId, identifier: 'Demo NaOH lot D-0312', titrant: 'NaOH', nominalConcentrationM: 0.1,
    preparedAt: new Date(now.getTime() - 3 * DAY), storage: 'polyethylene bottle with a soda-lime guard tube',
    notes: 'Demo: invented lot.', isDemo: true, createdBy: by,
  });
  const stdAt = new Date(now.getTime() - 1 * DAY);
  const std = standardiseWithDefaults({ standard: 'KHP', massG: 0.4087, purity: 0.9998, equivalenceVolumeMl: 19.92 });
  await repo.insertStandardisation(tx, {
    labId, lotId: lot.id, standard: 'KHP', massG: std.used.massG, purity: std.used.purity ?? 1,
    molarMassGPerMol: std.molarMassGPerMol, equivalenceVolumeMl: std.used.equivalenceVolumeMl,
    inputs: { ...std.used, assumptions: std.assumptions, uSharedRel: std.uSharedRel },
    concentrationM: std.concentrationM, uConcentrationM: std.uConcentrationM, budget: std.budget,
    performedAt: stdAt, performedBy: by, expiresAt: new Date(stdAt.getTime() + s.standardisationMaxAgeDays * DAY),
    notes: 'Demo: invented weighing and end point.', isDemo: true,
  });

  const electrode = await repo.insertElectrode(tx, {
    labId, identifier: 'Demo electrode GE-3', description: 'Demo: invented combination glass electrode', isDemo: true, createdBy: by,
  });
  // Invented readings of a slightly tired electrode: 98 % of Nernst, +6 mV at pH 7, at 22 °C.
  const t = 22;
  const S = 0.98 * nernstSlopeMvPerPH(t);
  const points = (['KHP', 'phosphate', 'borax'] as const).map((buffer, i) => ({
    buffer,
    mV: Math.round((6 - S * ([4.002, 6.875, 9.207][i] - 7)) * 10) / 10,
  }));
  const limits = { minSlopePct: s.electrodeMinSlopePct, maxSlopePct: s.electrodeMaxSlopePct, maxAbsOffsetMv: s.electrodeMaxAbsOffsetMv };
  const cal = calibrateElectrode({ temperatureC: t, points, limits });
  const eAt = new Date(now.getTime() - 2 * HOUR);
  await repo.insertElectrodeCalibration(tx, {
    labId, electrodeId: electrode.id, temperatureC: t, points: cal.points, inputs: { temperatureC: t, points },
    slopePct: cal.slopePct, slopeMvPerPH: cal.slopeMvPerPH, offsetMv: cal.offsetMv, limits, accepted: cal.accepted,
    acceptanceReasons: cal.reasons, result: cal, performedAt: eAt, performedBy: by,
    expiresAt: new Date(eAt.getTime() + s.electrodeMaxAgeHours * HOUR), notes: 'Demo: invented readings.', isDemo: true,
  });
}
