// Rows of the calibration tables. Every read and write is scoped by lab: a record of another lab is simply not found.
import { and, asc, eq } from 'drizzle-orm';
import {
  burettes,
  dripCalibrations,
  dripSettings,
  electrodeCalibrations,
  electrodes,
  labs,
  runs,
  standardisations,
  titrantLots,
  users,
} from '../../db/schema';
import type { Executor } from './executor';

export type BuretteRow = typeof burettes.$inferSelect;
export type DripSettingRow = typeof dripSettings.$inferSelect;
export type DripCalibrationRow = typeof dripCalibrations.$inferSelect;
export type ElectrodeRow = typeof electrodes.$inferSelect;
export type ElectrodeCalibrationRow = typeof electrodeCalibrations.$inferSelect;
export type TitrantLotRow = typeof titrantLots.$inferSelect;
export type StandardisationRow = typeof standardisations.$inferSelect;

/** Whether `id` is a calibration record of the lab: a drip calibration, a standardisation or an electrode calibration. */
export async function isCalibrationOfLab(db: Executor, labId: string, id: string): Promise<boolean> {
  for (const t of [dripCalibrations, standardisations, electrodeCalibrations]) {
    const [row] = await db.select({ id: t.id }).from(t).where(and(eq(t.id, id), eq(t.labId, labId))).limit(1);
    if (row) return true;
  }
  return false;
}

// ---------- lab settings ----------

export async function labSettings(db: Executor, labId: string): Promise<unknown> {
  const [row] = await db.select({ settings: labs.settings }).from(labs).where(eq(labs.id, labId));
  return row?.settings;
}

/** Replaces labs.settings (the service merged in the other areas' keys it read). */
export async function setLabSettings(db: Executor, labId: string, settings: Record<string, unknown>) {
  await db.update(labs).set({ settings }).where(eq(labs.id, labId));
}

// ---------- registers ----------

export async function listBurettes(db: Executor, labId: string) {
  return db.select().from(burettes).where(eq(burettes.labId, labId)).orderBy(asc(burettes.identifier));
}
export async function findBurette(db: Executor, labId: string, id: string) {
  const [row] = await db.select().from(burettes).where(and(eq(burettes.labId, labId), eq(burettes.id, id)));
  return row;
}
export async function insertBurette(db: Executor, values: typeof burettes.$inferInsert) {
  const [row] = await db.insert(burettes).values(values).returning();
  return row;
}
export async function updateBurette(db: Executor, labId: string, id: string, set: Partial<typeof burettes.$inferInsert>) {
  const [row] = await db.update(burettes).set(set).where(and(eq(burettes.labId, labId), eq(burettes.id, id))).returning();
  return row;
}

export async function listDripSettings(db: Executor, labId: string) {
  return db.select().from(dripSettings).where(eq(dripSettings.labId, labId)).orderBy(asc(dripSettings.createdAt));
}
export async function findDripSetting(db: Executor, labId: string, id: string) {
  const [row] = await db.select().from(dripSettings).where(and(eq(dripSettings.labId, labId), eq(dripSettings.id, id)));
  return row;
}
export async function insertDripSetting(db: Executor, values: typeof dripSettings.$inferInsert) {
  const [row] = await db.insert(dripSettings).values(values).returning();
  return row;
}
export async function updateDripSetting(db: Executor, labId: string, id: string, set: Partial<typeof dripSettings.$inferInsert>) {
  const [row] = await db
    .update(dripSettings)
    .set(set)
    .where(and(eq(dripSettings.labId, labId), eq(dripSettings.id, id)))
    .returning();
  return row;
}

export async function listElectrodes(db: Executor, labId: string) {
  return db.select().from(electrodes).where(eq(electrodes.labId, labId)).orderBy(asc(electrodes.identifier));
}
export async function findElectrode(db: Executor, labId: string, id: string) {
  const [row] = await db.select().from(electrodes).where(and(eq(electrodes.labId, labId), eq(electrodes.id, id)));
  return row;
}
export async function insertElectrode(db: Executor, values: typeof electrodes.$inferInsert) {
  const [row] = await db.insert(electrodes).values(values).returning();
  return row;
}
export async function updateElectrode(db: Executor, labId: string, id: string, set: Partial<typeof electrodes.$inferInsert>) {
  const [row] = await db.update(electrodes).set(set).where(and(eq(electrodes.labId, labId), eq(electrodes.id, id))).returning();
  return row;
}

export async function listLots(db: Executor, labId: string) {
  return db.select().from(titrantLots).where(eq(titrantLots.labId, labId)).orderBy(asc(titrantLots.preparedAt));
}
export async function findLot(db: Executor, labId: string, id: string) {
  const [row] = await db.select().from(titrantLots).where(and(eq(titrantLots.labId, labId), eq(titrantLots.id, id)));
  return row;
}
export async function insertLot(db: Executor, values: typeof titrantLots.$inferInsert) {
  const [row] = await db.insert(titrantLots).values(values).returning();
  return row;
}
export async function updateLot(db: Executor, labId: string, id: string, set: Partial<typeof titrantLots.$inferInsert>) {
  const [row] = await db.update(titrantLots).set(set).where(and(eq(titrantLots.labId, labId), eq(titrantLots.id, id))).returning();
  return row;
}

export async function runInLab(db: Executor, labId: string, runId: string) {
  const [row] = await db.select({ id: runs.id }).from(runs).where(and(eq(runs.labId, labId), eq(runs.id, runId)));
  return row;
}

// ---------- calibration records (with who made them) ----------

export async function listDripCalibrations(db: Executor, labId: string) {
  return db
    .select({ row: dripCalibrations, performedByName: users.displayName })
    .from(dripCalibrations)
    .leftJoin(users, eq(users.id, dripCalibrations.performedBy))
    .where(eq(dripCalibrations.labId, labId))
    .orderBy(asc(dripCalibrations.performedAt));
}
export async function findDripCalibration(db: Executor, labId: string, id: string) {
  const [row] = await db
    .select()
    .from(dripCalibrations)
    .where(and(eq(dripCalibrations.labId, labId), eq(dripCalibrations.id, id)));
  return row;
}
export async function dripCalibrationsOf(db: Executor, labId: string, dripSettingId: string) {
  return db
    .select()
    .from(dripCalibrations)
    .where(and(eq(dripCalibrations.labId, labId), eq(dripCalibrations.dripSettingId, dripSettingId)));
}
export async function insertDripCalibration(db: Executor, values: typeof dripCalibrations.$inferInsert) {
  const [row] = await db.insert(dripCalibrations).values(values).returning();
  return row;
}
export async function updateDripCalibration(
  db: Executor,
  labId: string,
  id: string,
  set: Partial<Pick<DripCalibrationRow, 'notes' | 'expiresAt' | 'withdrawnAt' | 'withdrawnReason'>>,
) {
  const [row] = await db
    .update(dripCalibrations)
    .set(set)
    .where(and(eq(dripCalibrations.labId, labId), eq(dripCalibrations.id, id)))
    .returning();
  return row;
}

export async function listElectrodeCalibrations(db: Executor, labId: string) {
  return db
    .select({ row: electrodeCalibrations, performedByName: users.displayName })
    .from(electrodeCalibrations)
    .leftJoin(users, eq(users.id, electrodeCalibrations.performedBy))
    .where(eq(electrodeCalibrations.labId, labId))
    .orderBy(asc(electrodeCalibrations.performedAt));
}
export async function findElectrodeCalibration(db: Executor, labId: string, id: string) {
  const [row] = await db
    .select()
    .from(electrodeCalibrations)
    .where(and(eq(electrodeCalibrations.labId, labId), eq(electrodeCalibrations.id, id)));
  return row;
}
export async function insertElectrodeCalibration(db: Executor, values: typeof electrodeCalibrations.$inferInsert) {
  const [row] = await db.insert(electrodeCalibrations).values(values).returning();
  return row;
}
export async function updateElectrodeCalibration(
  db: Executor,
  labId: string,
  id: string,
  set: Partial<Pick<ElectrodeCalibrationRow, 'notes' | 'expiresAt' | 'withdrawnAt' | 'withdrawnReason'>>,
) {
  const [row] = await db
    .update(electrodeCalibrations)
    .set(set)
    .where(and(eq(electrodeCalibrations.labId, labId), eq(electrodeCalibrations.id, id)))
    .returning();
  return row;
}

export async function listStandardisations(db: Executor, labId: string) {
  return db
    .select({ row: standardisations, performedByName: users.displayName })
    .from(standardisations)
    .leftJoin(users, eq(users.id, standardisations.performedBy))
    .where(eq(standardisations.labId, labId))
    .orderBy(asc(standardisations.performedAt));
}
export async function findStandardisation(db: Executor, labId: string, id: string) {
  const [row] = await db
    .select()
    .from(standardisations)
    .where(and(eq(standardisations.labId, labId), eq(standardisations.id, id)));
  return row;
}
export async function insertStandardisation(db: Executor, values: typeof standardisations.$inferInsert) {
  const [row] = await db.insert(standardisations).values(values).returning();
  return row;
}
export async function updateStandardisation(
  db: Executor,
  labId: string,
  id: string,
  set: Partial<Pick<StandardisationRow, 'notes' | 'expiresAt' | 'withdrawnAt' | 'withdrawnReason'>>,
) {
  const [row] = await db
    .update(standardisations)
    .set(set)
    .where(and(eq(standardisations.labId, labId), eq(standardisations.id, id)))
    .returning();
  return row;
}
