// The lab's calibrations: registers (burettes, drip settings, electrodes, titrant lots) and calibration records.
// Results are always computed here with the shared science; whatever a client computed for its preview is ignored.
// Every change is audited in the transaction that makes it.
import { checkRepeatability, gravimetricDripRate } from '../../shared/calibration/gravimetric';
import { buretteTolerance } from '../../shared/calibration/buretteTolerance';
import { countDrops } from '../../shared/calibration/dropCounter';
import { calibrateElectrode } from '../../shared/calibration/electrode';
import { CalibrationInputError } from '../../shared/calibration/errors';
import { fitBuretteDrain } from '../../shared/calibration/markTiming';
import { combineStandardisations, recordStatuses, type StatusInput } from '../../shared/calibration/records';
import { standardiseWithDefaults } from '../../shared/calibration/standardisation';
import { EngineInputError } from '../../shared/engine/errors';
import {
  labCalibrationSettingsSchema,
  readLabCalibrationSettings,
  type Burette,
  type CalibrationOverview,
  type CreateBuretteBody,
  type CreateDripCalibrationBody,
  type CreateDripSettingBody,
  type CreateElectrodeBody,
  type CreateElectrodeCalibrationBody,
  type CreateStandardisationBody,
  type CreateTitrantLotBody,
  type DripCalibration,
  type ElectrodeCalibrationRecord,
  type LabCalibrationSettings,
  type RecordStatus,
  type Standardisation,
  type TitrantLot,
  type UpdateBuretteBody,
  type UpdateDripSettingBody,
  type UpdateElectrodeBody,
  type UpdateLabCalibrationSettingsBody,
  type UpdateRecordBody,
  type UpdateTitrantLotBody,
} from '../../shared/schemas/calibration-api';
import type { BudgetRow } from '../../shared/schemas/run-document';
import type { ServerContext } from '../auth/context';
import { HttpError, notFound } from '../http/errors';
import type { Caller } from '../http/routes';
import * as repo from '../repos/calibrations';
import type { Executor } from '../repos/executor';
import { audit } from './audit';

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
/** A record may be dated a little ahead of the server's clock (phone clocks drift), not more. */
const FUTURE_SLACK_MS = 10 * 60_000;

const iso = (d: Date) => d.toISOString();
const isoOrNull = (d: Date | null) => (d ? d.toISOString() : null);

/** Bad measurements get a 400 naming every problem, in the API's error shape. */
function science<T>(f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof CalibrationInputError || e instanceof EngineInputError) {
      throw new HttpError(
        400,
        'invalid_input',
        e.message,
        e.issues.map((i) => {
          const at = i.indexOf(': ');
          return at > 0 ? { path: i.slice(0, at), message: i.slice(at + 2) } : { path: '', message: i };
        }),
      );
    }
    if (e instanceof RangeError) throw new HttpError(400, 'invalid_input', e.message);
    throw e;
  }
}

function uniqueViolation(e: unknown): boolean {
  for (let x: unknown = e; x && typeof x === 'object'; x = (x as { cause?: unknown }).cause) {
    if ((x as { code?: unknown }).code === '23505') return true;
  }
  return false;
}

async function uniqueIdentifier<T>(what: string, identifier: string, f: () => Promise<T>): Promise<T> {
  try {
    return await f();
  } catch (e) {
    if (uniqueViolation(e)) throw new HttpError(409, 'duplicate_identifier', `This lab already has a ${what} called "${identifier}".`);
    throw e;
  }
}

function performedAt(app: ServerContext, given: string | undefined): Date {
  const now = app.now();
  if (!given) return now;
  const d = new Date(given);
  if (d.getTime() > now.getTime() + FUTURE_SLACK_MS) {
    throw new HttpError(400, 'invalid_input', 'performedAt is in the future; check the date and the phone clock.');
  }
  return d;
}

export async function settingsOf(app: ServerContext, db: Executor, labId: string): Promise<LabCalibrationSettings> {
  void app;
  return readLabCalibrationSettings(await repo.labSettings(db, labId));
}

// ---------- overview ----------

type Named<R> = { row: R; performedByName: string | null };

function base(r: Named<repo.DripCalibrationRow | repo.ElectrodeCalibrationRow | repo.StandardisationRow>, status: RecordStatus) {
  const x = r.row;
  return {
    id: x.id,
    performedAt: iso(x.performedAt),
    performedBy: x.performedBy,
    performedByName: r.performedByName,
    expiresAt: iso(x.expiresAt),
    accepted: 'accepted' in x ? x.accepted : true,
    acceptanceReasons: 'acceptanceReasons' in x ? ((x.acceptanceReasons as string[]) ?? []) : [],
    notes: x.notes,
    withdrawnAt: isoOrNull(x.withdrawnAt),
    withdrawnReason: x.withdrawnReason,
    isDemo: x.isDemo,
    status,
  };
}

const statusInput = (r: {
  row: { id: string; performedAt: Date; createdAt: Date; expiresAt: Date; withdrawnAt: Date | null; accepted?: boolean };
}): StatusInput => ({
  id: r.row.id,
  performedAt: r.row.performedAt,
  createdAt: r.row.createdAt,
  expiresAt: r.row.expiresAt,
  accepted: r.row.accepted ?? true,
  withdrawnAt: r.row.withdrawnAt,
});

function toDrip(r: Named<repo.DripCalibrationRow>, status: RecordStatus): DripCalibration {
  const x = r.row;
  return {
    ...base(r, status),
    dripSettingId: x.dripSettingId,
    method: x.method as DripCalibration['method'],
    inputs: x.inputs,
    result: x.result,
    rateMlPerS: x.rateMlPerS,
    uRateMlPerS: x.uRateMlPerS,
    drainVolumeMl: x.drainVolumeMl,
    deliveredVolumeMl: x.deliveredVolumeMl,
    dropsPerMin: x.dropsPerMin,
    dropVolumeMl: x.dropVolumeMl,
  };
}

function toElectrodeCal(r: Named<repo.ElectrodeCalibrationRow>, status: RecordStatus): ElectrodeCalibrationRecord {
  const x = r.row;
  return {
    ...base(r, status),
    electrodeId: x.electrodeId,
    temperatureC: x.temperatureC,
    points: x.points as ElectrodeCalibrationRecord['points'],
    slopePct: x.slopePct,
    slopeMvPerPH: x.slopeMvPerPH,
    offsetMv: x.offsetMv,
    limits: x.limits as ElectrodeCalibrationRecord['limits'],
    result: x.result,
  };
}

function toStandardisation(r: Named<repo.StandardisationRow>, status: RecordStatus): Standardisation {
  const x = r.row;
  return {
    ...base(r, status),
    lotId: x.lotId,
    standard: x.standard,
    massG: x.massG,
    purity: x.purity,
    molarMassGPerMol: x.molarMassGPerMol,
    equivalenceVolumeMl: x.equivalenceVolumeMl,
    runId: x.runId,
    inputs: x.inputs,
    concentrationM: x.concentrationM,
    uConcentrationM: x.uConcentrationM,
    budget: x.budget as BudgetRow[],
  };
}

function groupBy<T>(xs: T[], key: (x: T) => string): Map<string, T[]> {
  const m = new Map<string, T[]>();
  for (const x of xs) {
    const k = key(x);
    const list = m.get(k);
    if (list) list.push(x);
    else m.set(k, [x]);
  }
  return m;
}

/** Newest first, as the history tables show them. */
const newestFirst = <T extends { performedAt: string }>(xs: T[]) => xs.sort((a, b) => b.performedAt.localeCompare(a.performedAt));

export async function overview(app: ServerContext, labId: string): Promise<CalibrationOverview> {
  const db = app.database.db;
  const now = app.now();
  const [settings, burettes, settingsRows, drips, electrodes, eCals, lots, stds] = await Promise.all([
    settingsOf(app, db, labId),
    repo.listBurettes(db, labId),
    repo.listDripSettings(db, labId),
    repo.listDripCalibrations(db, labId),
    repo.listElectrodes(db, labId),
    repo.listElectrodeCalibrations(db, labId),
    repo.listLots(db, labId),
    repo.listStandardisations(db, labId),
  ]);

  const dripsBySetting = groupBy(drips, (d) => d.row.dripSettingId);
  const settingsByBurette = groupBy(settingsRows, (s) => s.buretteId);
  const burettesOut: Burette[] = burettes.map((b) => ({
    id: b.id,
    identifier: b.identifier,
    capacityMl: b.capacityMl,
    class: b.class as Burette['class'],
    toleranceMl: b.toleranceMl,
    toleranceSource: b.toleranceSource,
    notes: b.notes,
    retired: Boolean(b.retiredAt),
    isDemo: b.isDemo,
    settings: (settingsByBurette.get(b.id) ?? []).map((s) => {
      const list = dripsBySetting.get(s.id) ?? [];
      // A rate comes from gravimetric or mark timing; drop counts are their own series (drops/min, drop volume).
      const rated = recordStatuses(list.filter((d) => d.row.method !== 'drop-count').map(statusInput), now);
      const counts = recordStatuses(list.filter((d) => d.row.method === 'drop-count').map(statusInput), now);
      return {
        id: s.id,
        buretteId: s.buretteId,
        stopcockSetting: s.stopcockSetting,
        tip: s.tip,
        notes: s.notes,
        retired: Boolean(s.retiredAt),
        isDemo: s.isDemo,
        calibrations: newestFirst(
          list.map((d) => toDrip(d, (rated.statuses.get(d.row.id) ?? counts.statuses.get(d.row.id))!)),
        ),
        inForceId: rated.inForceId,
        inForceDropCountId: counts.inForceId,
      };
    }),
  }));

  const eCalsByElectrode = groupBy(eCals, (c) => c.row.electrodeId);
  const electrodesOut = electrodes.map((e) => {
    const list = eCalsByElectrode.get(e.id) ?? [];
    const st = recordStatuses(list.map(statusInput), now);
    return {
      id: e.id,
      identifier: e.identifier,
      description: e.description,
      retired: Boolean(e.retiredAt),
      isDemo: e.isDemo,
      calibrations: newestFirst(list.map((c) => toElectrodeCal(c, st.statuses.get(c.row.id)!))),
      inForceId: st.inForceId,
    };
  });

  const stdsByLot = groupBy(stds, (s) => s.row.lotId);
  const lotsOut: TitrantLot[] = lots.map((l) => {
    const list = stdsByLot.get(l.id) ?? [];
    const st = recordStatuses(list.map(statusInput), now);
    // Every valid standardisation of a lot is a replicate of its concentration: all of them are in force.
    const statusOf = (id: string): RecordStatus => (st.statuses.get(id) === 'superseded' ? 'in-force' : st.statuses.get(id)!);
    const lotUsable = !l.retiredAt && !(l.expiresAt && l.expiresAt.getTime() <= now.getTime());
    const valid = list.filter((s) => statusOf(s.row.id) === 'in-force');
    const current = lotUsable
      ? combineStandardisations(
          valid.map((s) => ({
            id: s.row.id,
            concentrationM: s.row.concentrationM,
            uConcentrationM: s.row.uConcentrationM,
            uSharedRel: (s.row.inputs as { uSharedRel?: number }).uSharedRel ?? 0,
            expiresAt: s.row.expiresAt,
          })),
        )
      : null;
    return {
      id: l.id,
      identifier: l.identifier,
      titrant: l.titrant,
      nominalConcentrationM: l.nominalConcentrationM,
      preparedAt: iso(l.preparedAt),
      storage: l.storage,
      notes: l.notes,
      expiresAt: isoOrNull(l.expiresAt),
      retired: Boolean(l.retiredAt),
      isDemo: l.isDemo,
      standardisations: newestFirst(list.map((s) => toStandardisation(s, statusOf(s.row.id)))),
      current,
    };
  });

  return { labId, settings, burettes: burettesOut, electrodes: electrodesOut, lots: lotsOut, asOf: iso(now) };
}

// ---------- settings ----------

export async function updateSettings(
  app: ServerContext,
  caller: Caller,
  labId: string,
  body: UpdateLabCalibrationSettingsBody,
): Promise<LabCalibrationSettings> {
  return app.database.db.transaction(async (tx) => {
    const raw = ((await repo.labSettings(tx, labId)) ?? {}) as Record<string, unknown>;
    const before = readLabCalibrationSettings(raw);
    const parsed = labCalibrationSettingsSchema.safeParse({ ...before, ...body });
    if (!parsed.success) {
      throw new HttpError(400, 'invalid_input', parsed.error.issues.map((i) => i.message).join('; '));
    }
    await repo.setLabSettings(tx, labId, { ...raw, ...parsed.data });
    await audit(tx, { labId, actorId: caller.userId, action: 'calibration-settings.update', entity: 'lab', entityId: labId, before, after: parsed.data });
    return parsed.data;
  });
}

// ---------- burettes and drip settings ----------

export async function createBurette(app: ServerContext, caller: Caller, labId: string, body: CreateBuretteBody) {
  const row = buretteTolerance(body.capacityMl, body.class);
  const toleranceMl = body.toleranceMl ?? row?.toleranceMl;
  if (toleranceMl === undefined) {
    throw new HttpError(
      400,
      'tolerance_needed',
      `Halfmark's table (ISO 385:2005, ASTM E287) has no tolerance for a ${body.capacityMl} mL class ${body.class} burette: enter it from the burette's certificate.`,
    );
  }
  const toleranceSource =
    body.toleranceMl !== undefined && body.toleranceMl !== row?.toleranceMl
      ? 'entered by the lab'
      : row!.source === 'memory'
        ? 'ISO 385:2005 / ASTM E287 table (value recalled, not re-read)'
        : row!.source;
  return uniqueIdentifier('burette', body.identifier, () =>
    app.database.db.transaction(async (tx) => {
      const b = await repo.insertBurette(tx, {
        labId,
        identifier: body.identifier,
        capacityMl: body.capacityMl,
        class: body.class,
        toleranceMl,
        toleranceSource,
        notes: body.notes ?? '',
        createdBy: caller.userId,
      });
      await audit(tx, { labId, actorId: caller.userId, action: 'burette.create', entity: 'burette', entityId: b.id, after: b });
      return b;
    }),
  );
}

export async function updateBurette(app: ServerContext, caller: Caller, labId: string, id: string, body: UpdateBuretteBody) {
  return app.database.db.transaction(async (tx) => {
    const before = await repo.findBurette(tx, labId, id);
    if (!before) throw notFound('Burette');
    const set: Parameters<typeof repo.updateBurette>[3] = {};
    if (body.notes !== undefined) set.notes = body.notes;
    if (body.retired !== undefined) set.retiredAt = body.retired ? (before.retiredAt ?? app.now()) : null;
    const after = Object.keys(set).length ? await repo.updateBurette(tx, labId, id, set) : before;
    await audit(tx, { labId, actorId: caller.userId, action: 'burette.update', entity: 'burette', entityId: id, before, after });
    return after;
  });
}

export async function createDripSetting(app: ServerContext, caller: Caller, labId: string, buretteId: string, body: CreateDripSettingBody) {
  return app.database.db.transaction(async (tx) => {
    if (!(await repo.findBurette(tx, labId, buretteId))) throw notFound('Burette');
    const s = await repo.insertDripSetting(tx, {
      labId,
      buretteId,
      stopcockSetting: body.stopcockSetting,
      tip: body.tip ?? '',
      notes: body.notes ?? '',
      createdBy: caller.userId,
    });
    await audit(tx, { labId, actorId: caller.userId, action: 'drip-setting.create', entity: 'drip_setting', entityId: s.id, after: s });
    return s;
  });
}

export async function updateDripSetting(app: ServerContext, caller: Caller, labId: string, id: string, body: UpdateDripSettingBody) {
  return app.database.db.transaction(async (tx) => {
    const before = await repo.findDripSetting(tx, labId, id);
    if (!before) throw notFound('Drip setting');
    const set: Parameters<typeof repo.updateDripSetting>[3] = {};
    if (body.stopcockSetting !== undefined) set.stopcockSetting = body.stopcockSetting;
    if (body.tip !== undefined) set.tip = body.tip;
    if (body.notes !== undefined) set.notes = body.notes;
    if (body.retired !== undefined) set.retiredAt = body.retired ? (before.retiredAt ?? app.now()) : null;
    const after = Object.keys(set).length ? await repo.updateDripSetting(tx, labId, id, set) : before;
    await audit(tx, { labId, actorId: caller.userId, action: 'drip-setting.update', entity: 'drip_setting', entityId: id, before, after });
    return after;
  });
}

// ---------- drip-rate calibrations ----------

export async function createDripCalibration(
  app: ServerContext,
  caller: Caller,
  labId: string,
  dripSettingId: string,
  body: CreateDripCalibrationBody,
): Promise<DripCalibration> {
  const db = app.database.db;
  const at = performedAt(app, body.performedAt);
  const row = await db.transaction(async (tx) => {
    const setting = await repo.findDripSetting(tx, labId, dripSettingId);
    if (!setting) throw notFound('Drip setting');
    const burette = (await repo.findBurette(tx, labId, setting.buretteId))!;
    const s = await settingsOf(app, tx, labId);
    let values: Omit<typeof import('../../db/schema').dripCalibrations.$inferInsert, 'labId' | 'dripSettingId' | 'performedAt' | 'expiresAt'>;

    if (body.method === 'gravimetric') {
      const result = science(() => gravimetricDripRate(body.inputs.deliveries));
      const acc = checkRepeatability(result, { maxRelSdPct: s.gravimetricMaxRelSdPct, minReplicates: s.gravimetricMinReplicates });
      values = {
        method: body.method,
        inputs: body.inputs,
        result: { ...result, limits: { maxRelSdPct: s.gravimetricMaxRelSdPct, minReplicates: s.gravimetricMinReplicates } },
        rateMlPerS: result.rateMlPerS,
        uRateMlPerS: result.uRateMlPerS,
        deliveredVolumeMl: result.volumeMl,
        accepted: acc.accepted,
        acceptanceReasons: acc.reasons,
      };
    } else if (body.method === 'mark-timing') {
      const fit = science(() => fitBuretteDrain(body.inputs));
      // Halfmark's acceptance for a drain fit: its residuals stay within the burette's own tolerance.
      const reasons =
        fit.rmseMl > burette.toleranceMl
          ? [`fit residuals ${fit.rmseMl.toFixed(3)} mL RMS exceed the burette tolerance ±${burette.toleranceMl} mL: re-tap the marks`]
          : [];
      values = {
        method: body.method,
        inputs: body.inputs,
        result: { ...fit, acceptance: `RMS residual ≤ burette tolerance ${burette.toleranceMl} mL` },
        rateMlPerS: fit.q0MlPerS,
        uRateMlPerS: Number.isFinite(fit.uQ0) ? fit.uQ0 : null,
        drainVolumeMl: fit.drainVolumeMl,
        accepted: reasons.length === 0,
        acceptanceReasons: reasons,
      };
    } else {
      // The rate that turns drops/min into a drop volume: a stored calibration of this setting, never the client's.
      const candidates = (await repo.dripCalibrationsOf(tx, labId, dripSettingId)).filter((d) => d.method !== 'drop-count');
      let ref: repo.DripCalibrationRow | undefined;
      if (body.referenceCalibrationId) {
        ref = candidates.find((d) => d.id === body.referenceCalibrationId);
        if (!ref) throw new HttpError(400, 'invalid_input', 'referenceCalibrationId is not a rate calibration of this drip setting.');
      } else {
        const st = recordStatuses(candidates.map((row) => statusInput({ row })), app.now());
        ref = candidates.find((d) => d.id === st.inForceId);
      }
      const { rateMlPerS: _ignored, ...counted } = body.inputs;
      void _ignored;
      const result = science(() => countDrops({ ...counted, ...(ref?.rateMlPerS ? { rateMlPerS: ref.rateMlPerS } : {}) }));
      values = {
        method: body.method,
        inputs: counted,
        result: { ...result, referenceCalibrationId: ref?.id ?? null, referenceRateMlPerS: ref?.rateMlPerS ?? null },
        dropsPerMin: result.dropsPerMin,
        dropVolumeMl: result.dropVolumeMl ?? null,
        accepted: true,
        acceptanceReasons: ref ? [] : ['no gravimetric rate of this setting to give the drop volume'],
      };
    }
    const cal = await repo.insertDripCalibration(tx, {
      ...values,
      labId,
      dripSettingId,
      performedAt: at,
      performedBy: caller.userId,
      expiresAt: new Date(at.getTime() + s.dripRateMaxAgeDays * DAY),
      notes: body.notes ?? '',
    });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'drip-calibration.create',
      entity: 'drip_calibration',
      entityId: cal.id,
      after: { method: cal.method, rateMlPerS: cal.rateMlPerS, uRateMlPerS: cal.uRateMlPerS, dropsPerMin: cal.dropsPerMin, accepted: cal.accepted },
    });
    return cal;
  });
  return toDrip({ row, performedByName: caller.displayName }, row.accepted ? 'in-force' : 'failed');
}

// ---------- electrodes ----------

export async function createElectrode(app: ServerContext, caller: Caller, labId: string, body: CreateElectrodeBody) {
  return uniqueIdentifier('electrode', body.identifier, () =>
    app.database.db.transaction(async (tx) => {
      const e = await repo.insertElectrode(tx, { labId, identifier: body.identifier, description: body.description ?? '', createdBy: caller.userId });
      await audit(tx, { labId, actorId: caller.userId, action: 'electrode.create', entity: 'electrode', entityId: e.id, after: e });
      return e;
    }),
  );
}

export async function updateElectrode(app: ServerContext, caller: Caller, labId: string, id: string, body: UpdateElectrodeBody) {
  return app.database.db.transaction(async (tx) => {
    const before = await repo.findElectrode(tx, labId, id);
    if (!before) throw notFound('Electrode');
    const set: Parameters<typeof repo.updateElectrode>[3] = {};
    if (body.description !== undefined) set.description = body.description;
    if (body.retired !== undefined) set.retiredAt = body.retired ? (before.retiredAt ?? app.now()) : null;
    const after = Object.keys(set).length ? await repo.updateElectrode(tx, labId, id, set) : before;
    await audit(tx, { labId, actorId: caller.userId, action: 'electrode.update', entity: 'electrode', entityId: id, before, after });
    return after;
  });
}

export async function createElectrodeCalibration(
  app: ServerContext,
  caller: Caller,
  labId: string,
  electrodeId: string,
  body: CreateElectrodeCalibrationBody,
): Promise<ElectrodeCalibrationRecord> {
  const at = performedAt(app, body.performedAt);
  const row = await app.database.db.transaction(async (tx) => {
    if (!(await repo.findElectrode(tx, labId, electrodeId))) throw notFound('Electrode');
    const s = await settingsOf(app, tx, labId);
    const limits = { minSlopePct: s.electrodeMinSlopePct, maxSlopePct: s.electrodeMaxSlopePct, maxAbsOffsetMv: s.electrodeMaxAbsOffsetMv };
    const cal = science(() => calibrateElectrode({ temperatureC: body.temperatureC, points: body.points, limits }));
    const inserted = await repo.insertElectrodeCalibration(tx, {
      labId,
      electrodeId,
      temperatureC: cal.temperatureC,
      points: cal.points,
      inputs: { temperatureC: body.temperatureC, points: body.points },
      slopePct: cal.slopePct,
      slopeMvPerPH: cal.slopeMvPerPH,
      offsetMv: cal.offsetMv,
      limits,
      accepted: cal.accepted,
      acceptanceReasons: cal.reasons,
      result: cal,
      performedAt: at,
      performedBy: caller.userId,
      expiresAt: new Date(at.getTime() + s.electrodeMaxAgeHours * HOUR),
      notes: body.notes ?? '',
    });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'electrode-calibration.create',
      entity: 'electrode_calibration',
      entityId: inserted.id,
      after: { slopePct: cal.slopePct, offsetMv: cal.offsetMv, accepted: cal.accepted },
    });
    return inserted;
  });
  return toElectrodeCal({ row, performedByName: caller.displayName }, row.accepted ? 'in-force' : 'failed');
}

// ---------- titrant lots and standardisations ----------

export async function createLot(app: ServerContext, caller: Caller, labId: string, body: CreateTitrantLotBody) {
  return uniqueIdentifier('titrant lot', body.identifier, () =>
    app.database.db.transaction(async (tx) => {
      const l = await repo.insertLot(tx, {
        labId,
        identifier: body.identifier,
        titrant: body.titrant ?? 'NaOH',
        nominalConcentrationM: body.nominalConcentrationM,
        preparedAt: new Date(body.preparedAt),
        storage: body.storage ?? '',
        notes: body.notes ?? '',
        expiresAt: body.expiresAt ? new Date(body.expiresAt) : null,
        createdBy: caller.userId,
      });
      await audit(tx, { labId, actorId: caller.userId, action: 'titrant-lot.create', entity: 'titrant_lot', entityId: l.id, after: l });
      return l;
    }),
  );
}

export async function updateLot(app: ServerContext, caller: Caller, labId: string, id: string, body: UpdateTitrantLotBody) {
  return app.database.db.transaction(async (tx) => {
    const before = await repo.findLot(tx, labId, id);
    if (!before) throw notFound('Titrant lot');
    const set: Parameters<typeof repo.updateLot>[3] = {};
    if (body.storage !== undefined) set.storage = body.storage;
    if (body.notes !== undefined) set.notes = body.notes;
    if (body.expiresAt !== undefined) set.expiresAt = body.expiresAt ? new Date(body.expiresAt) : null;
    if (body.retired !== undefined) set.retiredAt = body.retired ? (before.retiredAt ?? app.now()) : null;
    const after = Object.keys(set).length ? await repo.updateLot(tx, labId, id, set) : before;
    await audit(tx, { labId, actorId: caller.userId, action: 'titrant-lot.update', entity: 'titrant_lot', entityId: id, before, after });
    return after;
  });
}

export async function createStandardisation(
  app: ServerContext,
  caller: Caller,
  labId: string,
  lotId: string,
  body: CreateStandardisationBody,
): Promise<Standardisation> {
  const at = performedAt(app, body.performedAt);
  const { runId, performedAt: _p, notes, ...measured } = body;
  void _p;
  const row = await app.database.db.transaction(async (tx) => {
    if (!(await repo.findLot(tx, labId, lotId))) throw notFound('Titrant lot');
    if (runId && !(await repo.runInLab(tx, labId, runId))) throw notFound('Run');
    const s = await settingsOf(app, tx, labId);
    const out = science(() => standardiseWithDefaults(measured));
    const inserted = await repo.insertStandardisation(tx, {
      labId,
      lotId,
      standard: out.used.standard ?? 'KHP',
      massG: out.used.massG,
      purity: out.used.purity ?? 1,
      molarMassGPerMol: out.molarMassGPerMol,
      equivalenceVolumeMl: out.used.equivalenceVolumeMl,
      runId: runId ?? null,
      inputs: { ...out.used, assumptions: out.assumptions, uSharedRel: out.uSharedRel },
      concentrationM: out.concentrationM,
      uConcentrationM: out.uConcentrationM,
      budget: out.budget,
      performedAt: at,
      performedBy: caller.userId,
      expiresAt: new Date(at.getTime() + s.standardisationMaxAgeDays * DAY),
      notes: notes ?? '',
    });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'standardisation.create',
      entity: 'standardisation',
      entityId: inserted.id,
      after: { lotId, concentrationM: inserted.concentrationM, uConcentrationM: inserted.uConcentrationM },
    });
    return inserted;
  });
  return toStandardisation({ row, performedByName: caller.displayName }, 'in-force');
}

// ---------- changes to stored records: notes, expiry, withdrawal ----------

type RecordKind = 'drip-calibration' | 'electrode-calibration' | 'standardisation';

const recordRepo = {
  'drip-calibration': { find: repo.findDripCalibration, update: repo.updateDripCalibration, entity: 'drip_calibration', label: 'Drip-rate calibration' },
  'electrode-calibration': {
    find: repo.findElectrodeCalibration,
    update: repo.updateElectrodeCalibration,
    entity: 'electrode_calibration',
    label: 'Electrode calibration',
  },
  standardisation: { find: repo.findStandardisation, update: repo.updateStandardisation, entity: 'standardisation', label: 'Standardisation' },
} as const;

export async function updateRecord(app: ServerContext, caller: Caller, labId: string, kind: RecordKind, id: string, body: UpdateRecordBody) {
  const r = recordRepo[kind];
  return app.database.db.transaction(async (tx) => {
    const before = await r.find(tx, labId, id);
    if (!before) throw notFound(r.label);
    const set: { notes?: string; expiresAt?: Date; withdrawnAt?: Date; withdrawnReason?: string } = {};
    if (body.withdraw) {
      if (before.withdrawnAt) throw new HttpError(409, 'already_withdrawn', `This ${r.label.toLowerCase()} was already withdrawn.`);
      set.withdrawnAt = app.now();
      set.withdrawnReason = body.withdraw.reason;
    }
    if (body.expiresAt !== undefined) {
      if (before.withdrawnAt) throw new HttpError(409, 'already_withdrawn', 'A withdrawn record keeps its expiry.');
      const d = new Date(body.expiresAt);
      if (d.getTime() <= before.performedAt.getTime()) throw new HttpError(400, 'invalid_input', 'expiresAt must be after the calibration was made.');
      set.expiresAt = d;
    }
    if (body.notes !== undefined) set.notes = body.notes;
    const after = await r.update(tx, labId, id, set);
    const pick = (x: typeof before) => ({ notes: x.notes, expiresAt: x.expiresAt, withdrawnAt: x.withdrawnAt, withdrawnReason: x.withdrawnReason });
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: body.withdraw ? `${kind}.withdraw` : `${kind}.update`,
      entity: r.entity,
      entityId: id,
      before: pick(before),
      after: pick(after!),
    });
    return { id, notes: after!.notes, expiresAt: iso(after!.expiresAt), withdrawnAt: isoOrNull(after!.withdrawnAt), withdrawnReason: after!.withdrawnReason };
  });
}
