// Server-sent events from the API, native side. React Native's fetch hands over the body only when it is complete
// and there is no EventSource, so a stream cannot be read here: the live follow of a run polls instead.
import type { OpenEventStream } from './liveStream.types';

export type { OpenEventStream, StreamHandlers } from './liveStream.types';

export const eventStreamSupported = false;

export const openEventStream: OpenEventStream = async () => {
  throw new Error('Server-sent events are not available on this platform.');
};
