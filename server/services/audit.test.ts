import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '../../db/schema';
import { authFixture, type AuthFixture } from '../auth/test-fixture';
import { closeTemplate } from '../testing/db';

let fx: AuthFixture;
beforeAll(async () => {
  fx = await authFixture();
});
afterAll(async () => {
  await fx.database.close();
  await closeTemplate();
});

describe('audit trail paging', () => {
  it('pages through entries that share one timestamp without skipping or repeating any', async () => {
    // One transaction stamps all its entries with the same time; microseconds make a millisecond cursor lossy too.
    const same = new Date('2026-03-01T10:00:00.123Z');
    const rows = Array.from({ length: 7 }, (_, i) => ({
      labId: fx.labA.id,
      actorId: fx.people.manager.id,
      action: 'test.same_time',
      entity: 'test',
      entityId: String(i),
      at: same,
    }));
    await fx.database.db.insert(auditLog).values(rows);
    await fx.database.query(
      "insert into audit_log (lab_id, action, entity, entity_id, at) values ($1, 'test.micro', 'test', 'a', '2026-03-01T10:00:00.123400Z'), ($1, 'test.micro', 'test', 'b', '2026-03-01T10:00:00.123700Z')",
      [fx.labA.id],
    );
    // Another lab's entry never shows up, even when its cursor is passed.
    await fx.database.db.insert(auditLog).values({ labId: fx.labB.id, action: 'test.other', entity: 'test', at: same });

    const auth = `Bearer ${(await fx.session(fx.people.manager.id)).accessToken}`;
    const seen: string[] = [];
    let before: string | null = null;
    let pages = 0;
    do {
      const q: string = `/api/labs/${fx.labA.id}/audit?limit=2${before ? `&before=${before}` : ''}`;
      const res = await fx.api().get(q).set('authorization', auth).expect(200);
      seen.push(...res.body.entries.map((e: { id: string }) => e.id));
      before = res.body.nextBefore;
      pages++;
    } while (before && pages < 20);

    const all = await fx.database.query<{ id: string }>('select id from audit_log where lab_id = $1', [fx.labA.id]);
    expect(all.length).toBe(9);
    expect(new Set(seen).size).toBe(seen.length); // none twice
    expect([...seen].sort()).toEqual(all.map((r) => r.id).sort()); // none skipped
    expect(pages).toBe(5);

    const other = await fx.database.query<{ id: string }>('select id from audit_log where lab_id = $1', [fx.labB.id]);
    const probe = await fx.api().get(`/api/labs/${fx.labA.id}/audit?before=${other[0].id}`).set('authorization', auth).expect(200);
    expect(probe.body.entries).toEqual([]);
  });

  it('refuses a cursor that is not an entry id', async () => {
    const auth = `Bearer ${(await fx.session(fx.people.manager.id)).accessToken}`;
    await fx.api().get(`/api/labs/${fx.labA.id}/audit?before=2026-03-01T10:00:00Z`).set('authorization', auth).expect(400);
  });
});
