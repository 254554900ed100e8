// Server-sent events from the API in the browser. EventSource cannot send the Authorization header the API checks,
// so the stream is read through fetch (a readable body stream) with the same token and refresh as every request.
import { authorizedFetch, parseError } from './client';
import type { OpenEventStream } from './liveStream.types';
import { SseParser } from './sse';

export type { OpenEventStream, StreamHandlers } from './liveStream.types';

export const eventStreamSupported = typeof ReadableStream !== 'undefined' && typeof TextDecoder !== 'undefined';

export const openEventStream: OpenEventStream = async (path, handlers, signal) => {
  let res: Response;
  try {
    res = await authorizedFetch(path, { headers: { accept: 'text/event-stream' }, cache: 'no-store', signal });
  } catch (err) {
    if (signal.aborted) return;
    throw err;
  }
  if (!res.ok) throw await parseError(res);
  // A proxy or an interception that answers something else (HTML, JSON) is not a stream: poll instead.
  if (!/text\/event-stream/.test(res.headers.get('content-type') ?? '') || !res.body) {
    void res.body?.cancel().catch(() => undefined);
    throw new Error('The server did not answer with an event stream.');
  }
  const reader = res.body.getReader();
  const decoder = new TextDecoder();
  const parser = new SseParser(handlers.onEvent, handlers.onActivity);
  const stop = () => void reader.cancel().catch(() => undefined);
  signal.addEventListener('abort', stop, { once: true });
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) return;
      parser.feed(decoder.decode(value, { stream: true }));
    }
  } catch (err) {
    if (signal.aborted) return;
    throw err;
  } finally {
    signal.removeEventListener('abort', stop);
  }
};
