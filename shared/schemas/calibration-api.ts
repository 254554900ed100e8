// Request and response shapes of the calibrations API (server/api/calibrations.ts), shared with the phone's forms.
// The measured inputs reuse the science's own schemas (./calibration.ts, ./run-document.ts); results are never
// accepted from a client: the server computes them with shared/calibration and shared/engine.
import { z } from 'zod';
import {
  BURETTE_CLASSES,
  dropCountInputSchema,
  electrodePointSchema,
  gravimetricReplicateSchema,
  markTimingInputSchema,
  TEMPERATURE_MAX_C,
  TEMPERATURE_MIN_C,
} from './calibration';
import { budgetRowSchema, standardizeInputSchema } from './run-document';

const text = (max: number) => z.string().trim().max(max, `at most ${max} characters`);
const identifier = z.string().trim().min(1, 'identifier is required').max(80, 'at most 80 characters');
// Year 0000 passes ISO 8601 but is no year PostgreSQL stores (its calendar goes from 1 BC to AD 1).
const isoTime = z.iso
  .datetime({ offset: true, error: 'expected a date and time (ISO 8601)' })
  .refine((s) => Date.parse(s) >= Date.parse('0001-01-01T00:00:00Z'), 'expected a date from the year 0001 on');

// ---------- lab settings: acceptance limits and ages ----------

/**
 * The lab's calibration policy, kept in labs.settings. Every default is common practice, not a standard:
 * electrode 95–105 % slope and ±30 mV offset; NaOH restandardised every 14 days (it takes up CO2 from air);
 * drip rates rechecked every 30 days; gravimetric repeatability within 1 % relative SD over at least 3 deliveries.
 */
export const labCalibrationSettingsSchema = z
  .object({
    dripRateMaxAgeDays: z.number().positive().max(3650).default(30),
    electrodeMaxAgeHours: z.number().positive().max(24 * 365).default(24),
    standardisationMaxAgeDays: z.number().positive().max(3650).default(14),
    gravimetricMaxRelSdPct: z.number().positive().max(50).default(1),
    gravimetricMinReplicates: z.number().int().min(2).max(20).default(3),
    electrodeMinSlopePct: z.number().min(50).max(150).default(95),
    electrodeMaxSlopePct: z.number().min(50).max(150).default(105),
    electrodeMaxAbsOffsetMv: z.number().nonnegative().max(200).default(30),
  })
  .refine((s) => s.electrodeMinSlopePct < s.electrodeMaxSlopePct, {
    message: 'electrodeMinSlopePct must be below electrodeMaxSlopePct',
    path: ['electrodeMinSlopePct'],
  });
export type LabCalibrationSettings = z.output<typeof labCalibrationSettingsSchema>;

/** Reads whatever labs.settings holds (other keys belong to other areas); unknown or bad values fall back to defaults. */
export function readLabCalibrationSettings(raw: unknown): LabCalibrationSettings {
  const base = labCalibrationSettingsSchema.parse({});
  if (!raw || typeof raw !== 'object') return base;
  const picked: Record<string, unknown> = {};
  for (const k of Object.keys(base) as (keyof LabCalibrationSettings)[]) {
    const v = (raw as Record<string, unknown>)[k];
    if (typeof v === 'number') picked[k] = v;
  }
  const r = labCalibrationSettingsSchema.safeParse(picked);
  return r.success ? r.data : base;
}

export const updateLabCalibrationSettingsBodySchema = z
  .object({
    dripRateMaxAgeDays: z.number().positive().max(3650),
    electrodeMaxAgeHours: z.number().positive().max(24 * 365),
    standardisationMaxAgeDays: z.number().positive().max(3650),
    gravimetricMaxRelSdPct: z.number().positive().max(50),
    gravimetricMinReplicates: z.number().int().min(2).max(20),
    electrodeMinSlopePct: z.number().min(50).max(150),
    electrodeMaxSlopePct: z.number().min(50).max(150),
    electrodeMaxAbsOffsetMv: z.number().nonnegative().max(200),
  })
  .partial();
export type UpdateLabCalibrationSettingsBody = z.infer<typeof updateLabCalibrationSettingsBodySchema>;

// ---------- burettes and drip settings ----------

export const createBuretteBodySchema = z.object({
  identifier,
  capacityMl: z.number().positive('capacityMl must be greater than zero (mL)').max(1000),
  class: z.enum(BURETTE_CLASSES, { error: 'class must be A or B' }),
  /** Needed only when the tolerance table has no row for this capacity and class. */
  toleranceMl: z.number().positive().max(5).optional(),
  notes: text(2000).optional(),
});
export type CreateBuretteBody = z.infer<typeof createBuretteBodySchema>;

export const updateBuretteBodySchema = z.object({ notes: text(2000).optional(), retired: z.boolean().optional() });
export type UpdateBuretteBody = z.infer<typeof updateBuretteBodySchema>;

export const createDripSettingBodySchema = z.object({
  stopcockSetting: z.string().trim().min(1, 'name the stopcock setting').max(120),
  tip: text(120).optional(),
  notes: text(2000).optional(),
});
export type CreateDripSettingBody = z.infer<typeof createDripSettingBodySchema>;

export const updateDripSettingBodySchema = z.object({
  stopcockSetting: z.string().trim().min(1).max(120).optional(),
  tip: text(120).optional(),
  notes: text(2000).optional(),
  retired: z.boolean().optional(),
});
export type UpdateDripSettingBody = z.infer<typeof updateDripSettingBodySchema>;

// ---------- drip-rate calibrations ----------

export const DRIP_METHODS = ['gravimetric', 'mark-timing', 'drop-count'] as const;
export type DripMethod = (typeof DRIP_METHODS)[number];

const recordMeta = { performedAt: isoTime.optional(), notes: text(2000).optional() };

export const createDripCalibrationBodySchema = z.discriminatedUnion(
  'method',
  [
    z.object({
      method: z.literal('gravimetric'),
      inputs: z.object({ deliveries: z.array(gravimetricReplicateSchema).min(1, 'give at least one delivery').max(50) }),
      ...recordMeta,
    }),
    z.object({ method: z.literal('mark-timing'), inputs: markTimingInputSchema, ...recordMeta }),
    z.object({
      method: z.literal('drop-count'),
      // The rate that scales drops to a drop volume is taken by the server from a stored calibration, never sent.
      inputs: dropCountInputSchema,
      referenceCalibrationId: z.uuid().optional(),
      ...recordMeta,
    }),
  ],
  { error: 'method must be gravimetric, mark-timing or drop-count' },
);
export type CreateDripCalibrationBody = z.input<typeof createDripCalibrationBodySchema>;

/** The only changes a stored calibration allows: notes, expiry, and withdrawal (final, with a reason). */
export const updateRecordBodySchema = z
  .object({
    notes: text(2000).optional(),
    expiresAt: isoTime.optional(),
    withdraw: z.object({ reason: z.string().trim().min(3, 'say why it is withdrawn').max(500) }).optional(),
  })
  .refine((b) => b.notes !== undefined || b.expiresAt !== undefined || b.withdraw !== undefined, {
    message: 'nothing to change: give notes, expiresAt or withdraw',
  });
export type UpdateRecordBody = z.infer<typeof updateRecordBodySchema>;

// ---------- electrodes ----------

export const createElectrodeBodySchema = z.object({ identifier, description: text(500).optional() });
export type CreateElectrodeBody = z.infer<typeof createElectrodeBodySchema>;

export const updateElectrodeBodySchema = z.object({ description: text(500).optional(), retired: z.boolean().optional() });
export type UpdateElectrodeBody = z.infer<typeof updateElectrodeBodySchema>;

/** Acceptance limits come from the lab's settings, not from the request. */
export const createElectrodeCalibrationBodySchema = z.object({
  temperatureC: z.number().min(TEMPERATURE_MIN_C).max(TEMPERATURE_MAX_C),
  points: z.array(electrodePointSchema).min(2, 'an electrode calibration needs at least 2 buffer points').max(5),
  ...recordMeta,
});
export type CreateElectrodeCalibrationBody = z.input<typeof createElectrodeCalibrationBodySchema>;

// ---------- titrant lots and standardisations ----------

export const createTitrantLotBodySchema = z.object({
  identifier,
  titrant: z.string().trim().min(1).max(40).default('NaOH'),
  nominalConcentrationM: z.number().positive('nominal concentration must be greater than zero (mol/L)').max(20),
  preparedAt: isoTime,
  storage: text(500).optional(),
  notes: text(2000).optional(),
  expiresAt: isoTime.optional(),
});
export type CreateTitrantLotBody = z.input<typeof createTitrantLotBodySchema>;

export const updateTitrantLotBodySchema = z.object({
  storage: text(500).optional(),
  notes: text(2000).optional(),
  expiresAt: isoTime.nullable().optional(),
  retired: z.boolean().optional(),
});
export type UpdateTitrantLotBody = z.infer<typeof updateTitrantLotBodySchema>;

export const createStandardisationBodySchema = standardizeInputSchema.extend({
  /** The Halfmark run whose equivalence volume this is (same lab); absent when Ve is typed in. */
  runId: z.uuid().optional(),
  ...recordMeta,
});
export type CreateStandardisationBody = z.input<typeof createStandardisationBodySchema>;

// ---------- responses ----------

/** in-force: the one to use now; superseded: an accepted older one; expired / failed / withdrawn: not to be used. */
export const RECORD_STATUSES = ['in-force', 'superseded', 'expired', 'failed', 'withdrawn'] as const;
export type RecordStatus = (typeof RECORD_STATUSES)[number];

const recordBase = {
  id: z.string(),
  performedAt: z.string(),
  performedBy: z.string().nullable(),
  performedByName: z.string().nullable(),
  expiresAt: z.string(),
  accepted: z.boolean(),
  acceptanceReasons: z.array(z.string()),
  notes: z.string(),
  withdrawnAt: z.string().nullable(),
  withdrawnReason: z.string().nullable(),
  isDemo: z.boolean(),
  status: z.enum(RECORD_STATUSES),
};

export const dripCalibrationSchema = z.object({
  ...recordBase,
  dripSettingId: z.string(),
  method: z.enum(DRIP_METHODS),
  inputs: z.unknown(),
  result: z.unknown(),
  rateMlPerS: z.number().nullable(),
  uRateMlPerS: z.number().nullable(),
  drainVolumeMl: z.number().nullable(),
  deliveredVolumeMl: z.number().nullable(),
  dropsPerMin: z.number().nullable(),
  dropVolumeMl: z.number().nullable(),
});
export type DripCalibration = z.infer<typeof dripCalibrationSchema>;

export const dripSettingSchema = z.object({
  id: z.string(),
  buretteId: z.string(),
  stopcockSetting: z.string(),
  tip: z.string(),
  notes: z.string(),
  retired: z.boolean(),
  isDemo: z.boolean(),
  calibrations: z.array(dripCalibrationSchema),
  /** The rate in force (gravimetric or mark timing). */
  inForceId: z.string().nullable(),
  /** The latest valid drop count (drops/min, drop volume); it gives no rate of its own. */
  inForceDropCountId: z.string().nullable(),
});
export type DripSetting = z.infer<typeof dripSettingSchema>;

export const buretteSchemaOut = z.object({
  id: z.string(),
  identifier: z.string(),
  capacityMl: z.number(),
  class: z.enum(BURETTE_CLASSES),
  toleranceMl: z.number(),
  toleranceSource: z.string(),
  notes: z.string(),
  retired: z.boolean(),
  isDemo: z.boolean(),
  settings: z.array(dripSettingSchema),
});
export type Burette = z.infer<typeof buretteSchemaOut>;

export const electrodeCalibrationSchema = z.object({
  ...recordBase,
  electrodeId: z.string(),
  temperatureC: z.number(),
  points: z.array(z.object({ pH: z.number(), mV: z.number(), buffer: z.string().optional() })),
  slopePct: z.number(),
  slopeMvPerPH: z.number(),
  offsetMv: z.number(),
  limits: z.object({ minSlopePct: z.number(), maxSlopePct: z.number(), maxAbsOffsetMv: z.number() }),
  result: z.unknown(),
});
export type ElectrodeCalibrationRecord = z.infer<typeof electrodeCalibrationSchema>;

export const electrodeSchemaOut = z.object({
  id: z.string(),
  identifier: z.string(),
  description: z.string(),
  retired: z.boolean(),
  isDemo: z.boolean(),
  calibrations: z.array(electrodeCalibrationSchema),
  inForceId: z.string().nullable(),
});
export type Electrode = z.infer<typeof electrodeSchemaOut>;

export const standardisationSchemaOut = z.object({
  ...recordBase,
  lotId: z.string(),
  standard: z.string(),
  massG: z.number(),
  purity: z.number(),
  molarMassGPerMol: z.number(),
  equivalenceVolumeMl: z.number(),
  runId: z.string().nullable(),
  inputs: z.unknown(),
  concentrationM: z.number(),
  uConcentrationM: z.number(),
  budget: z.array(budgetRowSchema),
});
export type Standardisation = z.infer<typeof standardisationSchemaOut>;

export const lotConcentrationSchema = z.object({
  concentrationM: z.number(),
  uConcentrationM: z.number(),
  n: z.number(),
  sdM: z.number().nullable(),
  standardisationIds: z.array(z.string()),
  /** The earliest expiry among the replicates combined: restandardise before then. */
  validUntil: z.string(),
  method: z.string(),
});
export type LotConcentration = z.infer<typeof lotConcentrationSchema>;

export const titrantLotSchemaOut = z.object({
  id: z.string(),
  identifier: z.string(),
  titrant: z.string(),
  nominalConcentrationM: z.number(),
  preparedAt: z.string(),
  storage: z.string(),
  notes: z.string(),
  expiresAt: z.string().nullable(),
  retired: z.boolean(),
  isDemo: z.boolean(),
  standardisations: z.array(standardisationSchemaOut),
  current: lotConcentrationSchema.nullable(),
});
export type TitrantLot = z.infer<typeof titrantLotSchemaOut>;

/** Everything the Calibrate section and the bench's run setup need, in one answer the phone can cache offline. */
export const calibrationOverviewSchema = z.object({
  labId: z.string(),
  settings: labCalibrationSettingsSchema,
  burettes: z.array(buretteSchemaOut),
  electrodes: z.array(electrodeSchemaOut),
  lots: z.array(titrantLotSchemaOut),
  /** Server time of the answer; statuses are as of this moment. */
  asOf: z.string(),
});
export type CalibrationOverview = z.infer<typeof calibrationOverviewSchema>;
