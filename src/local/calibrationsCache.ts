// The lab's calibrations overview (GET /api/labs/:labId/calibrations) as last fetched, one row per lab, so the
// bench's run setup can offer the calibrations in force with no network. Read-only copy of server data: nothing
// here goes to the outbox.
import { calibrationOverviewSchema, type CalibrationOverview } from '../../shared/schemas/calibration-api';

type Db = {
  runAsync(sql: string, ...params: (string | number | null)[]): Promise<unknown>;
  getFirstAsync<T>(sql: string, ...params: (string | number | null)[]): Promise<T | null>;
};

export interface CachedCalibrations {
  overview: CalibrationOverview;
  fetchedAtMs: number;
}

export async function saveCalibrations(db: Db, overview: CalibrationOverview, fetchedAtMs: number): Promise<void> {
  await db.runAsync(
    `INSERT INTO calibrations_cache (lab_id, overview_json, fetched_wall_ms) VALUES (?, ?, ?)
     ON CONFLICT (lab_id) DO UPDATE SET overview_json = excluded.overview_json, fetched_wall_ms = excluded.fetched_wall_ms`,
    overview.labId,
    JSON.stringify(overview),
    fetchedAtMs,
  );
}

/** The cached overview of a lab, or null when none is stored or what is stored no longer fits the schema. */
export async function loadCalibrations(db: Db, labId: string): Promise<CachedCalibrations | null> {
  const row = await db.getFirstAsync<{ overview_json: string; fetched_wall_ms: number }>(
    'SELECT overview_json, fetched_wall_ms FROM calibrations_cache WHERE lab_id = ?',
    labId,
  );
  if (!row) return null;
  let raw: unknown;
  try {
    raw = JSON.parse(row.overview_json);
  } catch {
    return null;
  }
  // An app update may change the shape; an old copy that no longer parses is treated as absent, not trusted.
  const parsed = calibrationOverviewSchema.safeParse(raw);
  return parsed.success ? { overview: parsed.data, fetchedAtMs: row.fetched_wall_ms } : null;
}
