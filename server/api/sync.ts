import { runs } from '../../db/schema';
import { liveQuerySchema, parsePushRequest, pullQuerySchema, pushRequestSchema } from '../../shared/schemas/sync';
import { recordLab, route } from '../http/routes';
import { liveHub } from '../services/live';
import * as sync from '../services/sync';

/** Heartbeat comment on idle live streams, so proxies and the client notice a dead connection (common practice). */
const HEARTBEAT_MS = 15_000;

export const syncRoutes = [
  route({
    method: 'post',
    path: '/sync/push',
    access: 'signedIn',
    body: pushRequestSchema,
    parseBody: parsePushRequest,
    // Writes records, runs and the device row only: never a session, account or membership.
    keepsAccess: true,
    summary: 'Push a batch of device changes; answers per change (accepted, duplicate, conflict, rejected, out_of_order).',
    handler: ({ app, caller, body }) => sync.push(app, caller!, body),
  }),
  route({
    method: 'get',
    path: '/sync/pull',
    access: 'signedIn',
    query: pullQuerySchema,
    summary: "Changes in the caller's labs after a cursor, oldest first.",
    handler: ({ app, caller, query }) => sync.pull(app, caller!, query),
  }),
  route({
    method: 'get',
    path: '/runs/:runId/live',
    access: ['manager', 'analyst', 'viewer'],
    labOf: recordLab(runs, runs.id, runs.labId, 'runId'),
    query: liveQuerySchema,
    summary: 'Follow a run: server-sent events with Accept: text/event-stream, else one JSON page (the polling fallback).',
    handler: async ({ app, caller, req, res, params, query }) => {
      const page = (cursor: number) => sync.pull(app, caller!, { cursor, limit: 5000, runId: params.runId });
      if (!/text\/event-stream/.test(req.get('accept') ?? '')) return page(query.after);

      // no-transform keeps the compression middleware from buffering the stream.
      res.status(200);
      res.setHeader('Content-Type', 'text/event-stream; charset=utf-8');
      res.setHeader('Cache-Control', 'no-store, no-transform');
      res.setHeader('X-Accel-Buffering', 'no');
      res.flushHeaders();

      let cursor = query.after;
      let closed = false;
      let busy: Promise<void> = Promise.resolve();
      const send = () => {
        busy = busy.then(async () => {
          while (!closed) {
            const p = await page(cursor);
            if (p.changes.length) res.write(`id: ${p.cursor}\nevent: changes\ndata: ${JSON.stringify(p)}\n\n`);
            cursor = p.cursor;
            if (!p.more) break;
          }
        });
        busy.catch((err) => {
          app.log('live follow: sending failed', err);
          res.end();
        });
      };
      const unfollow = await liveHub(app.database, app.log).follow(params.runId, (seq) => {
        if (seq > cursor) send();
      });
      const beat = setInterval(() => res.write(': beat\n\n'), HEARTBEAT_MS);
      req.on('close', () => {
        closed = true;
        clearInterval(beat);
        unfollow();
      });
      res.write(`event: ready\ndata: ${JSON.stringify({ cursor })}\n\n`);
      send();
    },
  }),
];
