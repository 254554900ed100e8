/**
 * Parser of a server-sent-event stream (the text/event-stream format of the WHATWG HTML standard, section
 * "Server-sent events", parsing rules looked up there). Used by the web live stream, which reads the stream through
 * fetch because EventSource cannot send the Authorization header the API needs.
 *
 * Fed text as it arrives, in chunks that may split lines anywhere; calls `onEvent` for each complete event.
 * Comments (`: beat`) count as activity: `onActivity` lets a watchdog see that a quiet stream is still alive.
 */
export interface SseEvent {
  /** `message` when the event names no type. */
  event: string;
  data: string;
  id: string | null;
}

export class SseParser {
  private buffer = '';
  private event = '';
  private data: string[] = [];
  private id: string | null = null;
  private sawCr = false;

  constructor(
    private readonly onEvent: (e: SseEvent) => void,
    private readonly onActivity: () => void = () => {},
  ) {}

  feed(chunk: string): void {
    if (!chunk) return;
    this.onActivity();
    let text = chunk;
    // A CR at the end of the previous chunk may be the first half of a CRLF.
    if (this.sawCr && text.startsWith('\n')) text = text.slice(1);
    this.sawCr = text.endsWith('\r');
    this.buffer += text;
    let start = 0;
    for (let i = 0; i < this.buffer.length; i++) {
      const c = this.buffer[i];
      if (c !== '\n' && c !== '\r') continue;
      this.line(this.buffer.slice(start, i));
      if (c === '\r' && this.buffer[i + 1] === '\n') i++;
      start = i + 1;
    }
    this.buffer = this.buffer.slice(start);
  }

  private line(line: string): void {
    if (line === '') return this.dispatch();
    if (line.startsWith(':')) return;
    const colon = line.indexOf(':');
    const field = colon === -1 ? line : line.slice(0, colon);
    let value = colon === -1 ? '' : line.slice(colon + 1);
    if (value.startsWith(' ')) value = value.slice(1);
    if (field === 'event') this.event = value;
    else if (field === 'data') this.data.push(value);
    else if (field === 'id' && !value.includes('\0')) this.id = value;
    // `retry` and unknown fields are ignored: the follower decides when to reconnect.
  }

  private dispatch(): void {
    if (this.data.length) this.onEvent({ event: this.event || 'message', data: this.data.join('\n'), id: this.id });
    this.event = '';
    this.data = [];
  }
}
