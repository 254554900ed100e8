import { sql } from 'drizzle-orm';
import type { Database } from '../../db/client';
import { labs, memberships, users } from '../../db/schema';
import type { Role } from '../../shared/schemas/roles';
import { hashPassword } from '../auth/password';
import { seedDemoCalibrations } from './calibrations';
import { seedDemoRuns } from './runs';

/**
 * The demo lab: invented people and an invented lab, marked demo wherever shown.
 * The sign-in details are printed at start; they are for trying the product, not for a real lab.
 */
export const DEMO_USERS: { email: string; displayName: string; role: Role; password: string }[] = [
  { email: 'analyst@demo.halfmark.test', displayName: 'Demo Analyst (Rowan)', role: 'analyst', password: 'demo-analyst-2026' },
  { email: 'manager@demo.halfmark.test', displayName: 'Demo Manager (Sasha)', role: 'manager', password: 'demo-manager-2026' },
  { email: 'viewer@demo.halfmark.test', displayName: 'Demo Viewer (Kit)', role: 'viewer', password: 'demo-viewer-2026' },
];

export const DEMO_LAB_NAME = 'Demo lab (invented data)';

export async function isEmpty(database: Database): Promise<boolean> {
  const rows = await database.db.select({ n: sql<number>`count(*)::int` }).from(labs);
  return rows[0].n === 0;
}

/** The demo accounts' password hashes: scrypt runs in libuv's thread pool, so start-up can begin them early. */
export const demoPasswordHashes = () => Promise.all(DEMO_USERS.map((u) => hashPassword(u.password)));

export async function seedDemo(database: Database, early?: Promise<string[]>): Promise<{ labId: string }> {
  const hashes = await (early ?? demoPasswordHashes());
  return database.db.transaction(async (tx) => {
    const [lab] = await tx
      .insert(labs)
      .values({ name: DEMO_LAB_NAME, isDemo: true, settings: { electrodeMaxAgeHours: 24, dripRateMaxAgeDays: 30 } })
      .returning({ id: labs.id });
    for (let i = 0; i < DEMO_USERS.length; i++) {
      const u = DEMO_USERS[i];
      const [row] = await tx
        .insert(users)
        .values({ email: u.email, displayName: u.displayName, passwordHash: hashes[i] })
        .returning({ id: users.id });
      await tx.insert(memberships).values({ labId: lab.id, userId: row.id, role: u.role });
    }
    await seedDemoCalibrations(tx, lab.id);
    await seedDemoRuns(tx, lab.id);
    return { labId: lab.id };
  });
}
