import { and, asc, eq } from 'drizzle-orm';
import { users } from '../../db/schema';
import { attachments } from '../../db/schema/desk';
import type { Attachment } from '../../shared/schemas/desk';
import type { Executor } from './executor';

const cols = {
  row: attachments,
  uploadedByName: users.displayName,
};

export type AttachmentRow = typeof attachments.$inferSelect & { uploadedByName: string };

export async function insert(tx: Executor, v: typeof attachments.$inferInsert) {
  const [row] = await tx.insert(attachments).values(v).returning();
  return row;
}

async function select(db: Executor, where: ReturnType<typeof and>): Promise<AttachmentRow[]> {
  const rows = await db.select(cols).from(attachments).innerJoin(users, eq(users.id, attachments.uploadedBy)).where(where).orderBy(asc(attachments.createdAt));
  return rows.map((r) => ({ ...r.row, uploadedByName: r.uploadedByName }));
}

export const listForRun = (db: Executor, runId: string) => select(db, and(eq(attachments.runId, runId)));
export const listForCalibration = (db: Executor, labId: string, calibrationId: string) =>
  select(db, and(eq(attachments.labId, labId), eq(attachments.calibrationId, calibrationId)));
export const byId = async (db: Executor, id: string) => (await select(db, and(eq(attachments.id, id))))[0];

export function toApi(r: AttachmentRow): Attachment {
  return {
    id: r.id,
    runId: r.runId,
    calibrationId: r.calibrationId,
    originalName: r.originalName,
    mimeType: r.mimeType,
    sizeBytes: r.sizeBytes,
    sha256: r.sha256,
    uploadedBy: r.uploadedBy,
    uploadedByName: r.uploadedByName,
    createdAt: r.createdAt.toISOString(),
  };
}
