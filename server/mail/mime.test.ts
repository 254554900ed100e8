import nodemailer from 'nodemailer';
import { describe, expect, it } from 'vitest';
import { parseMessage } from './mime';

// Round trip through nodemailer's own MIME composer (stream transport), so the decoder is checked against real output.
async function compose(subject: string, text: string) {
  const t = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'unix' });
  const info = await t.sendMail({ from: 'a@example.org', to: 'b@example.org', subject, text });
  return (info.message as Buffer).toString('utf8');
}

describe('parseMessage', () => {
  it('decodes a plain ASCII message', async () => {
    const m = parseMessage(await compose('Hello', 'Line one\nhttp://halfmark.test/invite/abc_DEF-123'));
    expect(m.subject).toBe('Hello');
    expect(m.text.trim()).toBe('Line one\nhttp://halfmark.test/invite/abc_DEF-123');
  });

  it('decodes non-ASCII subjects and long quoted-printable lines with the link intact', async () => {
    const link = `http://halfmark.test/reset/${'x'.repeat(43)}`;
    const text = `Größe – pKa ${'long words '.repeat(12)}\n${link}`;
    const m = parseMessage(await compose('Einladung für Labor µ', text));
    expect(m.subject).toBe('Einladung für Labor µ');
    expect(m.text.replace(/\r\n/g, '\n').trim()).toBe(text);
  });
});
