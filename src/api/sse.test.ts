import { describe, expect, it } from 'vitest';
import { SseParser, type SseEvent } from './sse';

// Expected events follow the parsing rules and examples of the WHATWG HTML standard, "Server-sent events".
function parse(chunks: string[]) {
  const events: SseEvent[] = [];
  let activity = 0;
  const p = new SseParser((e) => events.push(e), () => activity++);
  for (const c of chunks) p.feed(c);
  return { events, activity };
}

describe('SseParser', () => {
  it('reads named events with data and id, as the live route writes them', () => {
    const { events } = parse(['event: ready\ndata: {"cursor":0}\n\n', 'id: 7\nevent: changes\ndata: {"cursor":7}\n\n']);
    expect(events).toEqual([
      { event: 'ready', data: '{"cursor":0}', id: null },
      { event: 'changes', data: '{"cursor":7}', id: '7' },
    ]);
  });

  it('joins events split across chunks anywhere, including inside a CRLF', () => {
    const text = 'event: changes\r\ndata: {"a":1}\r\n\r\n';
    for (let cut = 1; cut < text.length; cut++) {
      const { events } = parse([text.slice(0, cut), text.slice(cut)]);
      expect(events, `cut at ${cut}`).toEqual([{ event: 'changes', data: '{"a":1}', id: null }]);
    }
  });

  it('skips comments (heartbeats) but counts them as activity; an event without data is not dispatched', () => {
    const { events, activity } = parse([': beat\n\n', 'event: nothing\n\n', 'data: x\n', 'data: y\n\n']);
    expect(events).toEqual([{ event: 'message', data: 'x\ny', id: null }]);
    expect(activity).toBe(4); // one per chunk
  });

  it('keeps an incomplete event until its blank line arrives', () => {
    const events: SseEvent[] = [];
    const p = new SseParser((e) => events.push(e));
    p.feed('event: changes\ndata: 1');
    expect(events).toEqual([]);
    p.feed('\n');
    expect(events).toEqual([]);
    p.feed('\n');
    expect(events).toHaveLength(1);
  });

  it('field without a colon and a value without the leading space', () => {
    const { events } = parse(['data\n\ndata:no-space\n\n']);
    expect(events.map((e) => e.data)).toEqual(['', 'no-space']);
  });
});
