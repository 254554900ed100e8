// Every local record gets its id on this device: UUID v7 (RFC 9562) sorts by creation time, so a server index and
// the sync outbox stay in insertion order, and the id doubles as the idempotency key when the record is pushed.
import { v7 } from 'uuid';

export function newId(): string {
  return v7();
}
