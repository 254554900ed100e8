import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { afterAll, describe, expect, it } from 'vitest';
import { changesSince } from '../server/repos/sync';
import { migrationsFolder, wrapPglite } from './client';

/** A copy of the migrations folder holding only the first `count` migrations: a database as an older server left it. */
function folderUpTo(count: number): string {
  const dir = mkdtempSync(path.join(tmpdir(), 'hm-migrations-'));
  cpSync(migrationsFolder, dir, { recursive: true });
  const journalPath = path.join(dir, 'meta', '_journal.json');
  const journal = JSON.parse(readFileSync(journalPath, 'utf8')) as { entries: unknown[] };
  journal.entries = journal.entries.slice(0, count);
  writeFileSync(journalPath, JSON.stringify(journal));
  return dir;
}

const folders: string[] = [];
afterAll(() => {
  for (const f of folders) rmSync(f, { recursive: true, force: true });
});

describe('migration 0009: readings take their change-log place from sync_changes', () => {
  it('moves each reading’s log row into readings.seq; a pull meets the same records in the same order', async () => {
    const pg = new PGlite();
    const old = folderUpTo(8); // 0000…0007: one sync_changes row per reading
    folders.push(old);
    await migrate(drizzle(pg), { migrationsFolder: old });
    const lab = '00000000-0000-4000-a000-000000000001';
    const user = '00000000-0000-4000-a000-000000000002';
    const run = '00000000-0000-4000-a000-000000000003';
    const other = '00000000-0000-4000-a000-000000000009';
    const reading = (n: number) => `00000000-0000-4000-a000-00000000001${n}`;
    await pg.exec(`
      insert into labs (id, name) values ('${lab}', 'Old lab (test)');
      insert into users (id, email, display_name) values ('${user}', 'old@example.org', 'Old analyst');
      insert into runs (id, lab_id, analyst_id, sample_name) values ('${run}', '${lab}', '${user}', 'Old run (test)');
      insert into readings (id, run_id, lab_id, time_s, ph) values
        ('${reading(1)}', '${run}', '${lab}', 0, 3.1), ('${reading(2)}', '${run}', '${lab}', 5, 3.2), ('${reading(3)}', '${run}', '${lab}', 10, 3.3),
        ('${other}', '${run}', '${lab}', 15, 3.4);
      insert into sync_changes (lab_id, entity, record_id, run_id) values
        ('${lab}', 'run', '${run}', '${run}'), ('${lab}', 'reading', '${reading(1)}', '${run}'), ('${lab}', 'reading', '${reading(2)}', '${run}'),
        ('${lab}', 'run', '${run}', '${run}'), ('${lab}', 'reading', '${reading(3)}', '${run}');`);
    const before = await changesBefore(pg, lab);

    await migrate(drizzle(pg), { migrationsFolder });
    const rows = (await pg.query<{ id: string; seq: number | null }>('select id, seq from readings order by time_s')).rows;
    expect(rows).toEqual([
      { id: reading(1), seq: 2 },
      { id: reading(2), seq: 3 },
      { id: reading(3), seq: 5 },
      // Never logged (like demo data seeded on the server): still not offered to pulls.
      { id: other, seq: null },
    ]);
    expect((await pg.query("select count(*)::int as n from sync_changes where entity = 'reading'")).rows).toEqual([{ n: 0 }]);
    const after = await changesSince(wrapPglite(pg).db, { labIds: [lab], cursor: 0, limit: 100 });
    expect(after).toEqual(before);
    // A page cut in the middle of the log goes on where it stopped.
    const first = await changesSince(wrapPglite(pg).db, { labIds: [lab], cursor: 0, limit: 2 });
    const rest = await changesSince(wrapPglite(pg).db, { labIds: [lab], cursor: first[1].seq, limit: 100 });
    expect([...first, ...rest]).toEqual(before);
    await pg.close();
  });
});

/** What a pull read before 0008: every row of sync_changes, in order. */
async function changesBefore(pg: PGlite, lab: string) {
  const rows = (await pg.query<{ seq: number; entity: string; record_id: string }>('select seq, entity, record_id from sync_changes where lab_id = $1 order by seq', [lab])).rows;
  return rows.map((r) => ({ seq: Number(r.seq), entity: r.entity, recordId: r.record_id }));
}
