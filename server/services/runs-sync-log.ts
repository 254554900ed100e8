import type { Executor } from '../repos/executor';
import { logChanges } from '../repos/sync';

/**
 * Desk changes that phones must see (a run imported, a review status set) go into sync's change log in the same
 * transaction, so the next pull brings them like any change pushed from a device. Readings are not named here: they
 * carry their place in the log themselves (insert them with insertReadingsIgnoringExisting).
 */
export async function logRunChange(tx: Executor, p: { labId: string; runId: string; checkpointIds?: string[] }): Promise<void> {
  await logChanges(tx, [
    { labId: p.labId, entity: 'run', recordId: p.runId, runId: p.runId },
    ...(p.checkpointIds ?? []).map((id) => ({ labId: p.labId, entity: 'checkpoint', recordId: id, runId: p.runId })),
  ]);
}
