import { sql } from 'drizzle-orm';
import {
  boolean,
  doublePrecision,
  index,
  jsonb,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
import { labs, runs, users } from './core';

/*
 * The lab's calibrations. Calibration records are never edited in their science: a new calibration supersedes the
 * older ones (all kept, for history and for the runs that used them); a manager may only withdraw one (with a reason)
 * or change its expiry and notes, and every such change is audited. Which record is "in force" is decided on read
 * (shared/calibration/records.ts): the latest accepted, unexpired, not withdrawn one per drip setting, electrode, lot.
 * The lab's acceptance limits and ages live in labs.settings (shape: shared/schemas/calibration-api.ts).
 */

/** A burette of the lab: capacity, class and its tolerance (ISO 385 / ASTM E287 table, or entered by the lab). */
export const burettes = pgTable(
  'burettes',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    identifier: text('identifier').notNull(),
    capacityMl: doublePrecision('capacity_ml').notNull(),
    /** 'A' | 'B' */
    class: text('class').notNull(),
    toleranceMl: doublePrecision('tolerance_ml').notNull(),
    /** Where the tolerance comes from: the standard's table row, or 'entered by the lab'. */
    toleranceSource: text('tolerance_source').notNull(),
    notes: text('notes').notNull().default(''),
    retiredAt: timestamp('retired_at', { withTimezone: true }),
    isDemo: boolean('is_demo').notNull().default(false),
    createdBy: uuid('created_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('burettes_lab_identifier_idx').on(t.labId, sql`lower(${t.identifier})`)],
);

/** A drip setting of a burette: how far the stopcock is opened and which tip; each has its own calibrated rate. */
export const dripSettings = pgTable(
  'drip_settings',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    buretteId: uuid('burette_id')
      .notNull()
      .references(() => burettes.id, { onDelete: 'cascade' }),
    /** e.g. "stopcock ¼ turn", "mark 3". */
    stopcockSetting: text('stopcock_setting').notNull(),
    tip: text('tip').notNull().default(''),
    notes: text('notes').notNull().default(''),
    retiredAt: timestamp('retired_at', { withTimezone: true }),
    isDemo: boolean('is_demo').notNull().default(false),
    createdBy: uuid('created_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('drip_settings_burette_idx').on(t.buretteId)],
);

/** One calibration of a drip setting's rate. `inputs` is what was measured; the results are computed by the server. */
export const dripCalibrations = pgTable(
  'drip_calibrations',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    dripSettingId: uuid('drip_setting_id')
      .notNull()
      .references(() => dripSettings.id, { onDelete: 'cascade' }),
    /** 'gravimetric' | 'mark-timing' | 'drop-count' */
    method: text('method').notNull(),
    inputs: jsonb('inputs').notNull(),
    /** The full computed result (replicates, fit, notes, assumptions). */
    result: jsonb('result').notNull(),
    /** mL/s at 20 °C; null for a drop count without a gravimetric rate to scale it. */
    rateMlPerS: doublePrecision('rate_ml_per_s'),
    uRateMlPerS: doublePrecision('u_rate_ml_per_s'),
    /** Mark timing: the drain-model volume Vh (mL); gravimetric: the mean delivered volume. */
    drainVolumeMl: doublePrecision('drain_volume_ml'),
    deliveredVolumeMl: doublePrecision('delivered_volume_ml'),
    dropsPerMin: doublePrecision('drops_per_min'),
    dropVolumeMl: doublePrecision('drop_volume_ml'),
    accepted: boolean('accepted').notNull(),
    acceptanceReasons: jsonb('acceptance_reasons').notNull().default(sql`'[]'::jsonb`),
    performedAt: timestamp('performed_at', { withTimezone: true }).notNull(),
    performedBy: uuid('performed_by').references(() => users.id),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    notes: text('notes').notNull().default(''),
    withdrawnAt: timestamp('withdrawn_at', { withTimezone: true }),
    withdrawnReason: text('withdrawn_reason'),
    isDemo: boolean('is_demo').notNull().default(false),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('drip_calibrations_setting_idx').on(t.dripSettingId, t.performedAt)],
);

/** A lot of titrant as prepared (e.g. NaOH ≈ 0.1 mol/L); its current concentration comes from its standardisations. */
export const titrantLots = pgTable(
  'titrant_lots',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    identifier: text('identifier').notNull(),
    titrant: text('titrant').notNull().default('NaOH'),
    nominalConcentrationM: doublePrecision('nominal_concentration_m').notNull(),
    preparedAt: timestamp('prepared_at', { withTimezone: true }).notNull(),
    storage: text('storage').notNull().default(''),
    notes: text('notes').notNull().default(''),
    /** The lot itself (not its standardisations) is not to be used after this. */
    expiresAt: timestamp('expires_at', { withTimezone: true }),
    retiredAt: timestamp('retired_at', { withTimezone: true }),
    isDemo: boolean('is_demo').notNull().default(false),
    createdBy: uuid('created_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('titrant_lots_lab_identifier_idx').on(t.labId, sql`lower(${t.identifier})`)],
);

/** One standardisation of a lot against a primary standard (QUAM A2 form), with its GUM budget. */
export const standardisations = pgTable(
  'standardisations',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    lotId: uuid('lot_id')
      .notNull()
      .references(() => titrantLots.id, { onDelete: 'cascade' }),
    standard: text('standard').notNull(),
    massG: doublePrecision('mass_g').notNull(),
    purity: doublePrecision('purity').notNull(),
    molarMassGPerMol: doublePrecision('molar_mass_g_per_mol').notNull(),
    equivalenceVolumeMl: doublePrecision('equivalence_volume_ml').notNull(),
    /** The Halfmark run whose equivalence volume was used; null when typed in. */
    runId: uuid('run_id').references(() => runs.id, { onDelete: 'set null' }),
    /** Everything entered, uncertainties included, as validated. */
    inputs: jsonb('inputs').notNull(),
    concentrationM: doublePrecision('concentration_m').notNull(),
    uConcentrationM: doublePrecision('u_concentration_m').notNull(),
    budget: jsonb('budget').notNull(),
    performedAt: timestamp('performed_at', { withTimezone: true }).notNull(),
    performedBy: uuid('performed_by').references(() => users.id),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    notes: text('notes').notNull().default(''),
    withdrawnAt: timestamp('withdrawn_at', { withTimezone: true }),
    withdrawnReason: text('withdrawn_reason'),
    isDemo: boolean('is_demo').notNull().default(false),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('standardisations_lot_idx').on(t.lotId, t.performedAt)],
);

/** A pH electrode of the lab (the thing a calibration belongs to). */
export const electrodes = pgTable(
  'electrodes',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    identifier: text('identifier').notNull(),
    description: text('description').notNull().default(''),
    retiredAt: timestamp('retired_at', { withTimezone: true }),
    isDemo: boolean('is_demo').notNull().default(false),
    createdBy: uuid('created_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('electrodes_lab_identifier_idx').on(t.labId, sql`lower(${t.identifier})`)],
);

/** One electrode calibration: buffer points in mV → slope (% Nernst) and offset (mV at pH 7), judged on lab limits. */
export const electrodeCalibrations = pgTable(
  'electrode_calibrations',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    labId: uuid('lab_id')
      .notNull()
      .references(() => labs.id, { onDelete: 'cascade' }),
    electrodeId: uuid('electrode_id')
      .notNull()
      .references(() => electrodes.id, { onDelete: 'cascade' }),
    temperatureC: doublePrecision('temperature_c').notNull(),
    /** [{pH, mV, buffer?}] as used (buffer values resolved at the temperature). */
    points: jsonb('points').notNull(),
    inputs: jsonb('inputs').notNull(),
    slopePct: doublePrecision('slope_pct').notNull(),
    slopeMvPerPH: doublePrecision('slope_mv_per_ph').notNull(),
    offsetMv: doublePrecision('offset_mv').notNull(),
    limits: jsonb('limits').notNull(),
    accepted: boolean('accepted').notNull(),
    acceptanceReasons: jsonb('acceptance_reasons').notNull().default(sql`'[]'::jsonb`),
    result: jsonb('result').notNull(),
    performedAt: timestamp('performed_at', { withTimezone: true }).notNull(),
    performedBy: uuid('performed_by').references(() => users.id),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    notes: text('notes').notNull().default(''),
    withdrawnAt: timestamp('withdrawn_at', { withTimezone: true }),
    withdrawnReason: text('withdrawn_reason'),
    isDemo: boolean('is_demo').notNull().default(false),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('electrode_calibrations_electrode_idx').on(t.electrodeId, t.performedAt)],
);
