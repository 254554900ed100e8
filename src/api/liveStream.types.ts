import type { SseEvent } from './sse';

export interface StreamHandlers {
  onEvent(e: SseEvent): void;
  /** Any bytes arrived (heartbeat comments too): the connection is alive. */
  onActivity?(): void;
}

/**
 * Opens a server-sent-event stream of the API with the access token. Resolves when the server ends the stream;
 * rejects when it cannot be opened (network, an answer that is not an event stream) or breaks. Aborting the signal
 * closes it and resolves.
 */
export type OpenEventStream = (path: string, handlers: StreamHandlers, signal: AbortSignal) => Promise<void>;
