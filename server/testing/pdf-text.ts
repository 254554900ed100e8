import { inflateSync } from 'node:zlib';

/**
 * The text a PDF shows on its pages, one line per text-showing operator (Tj, or TJ with its kerning numbers dropped),
 * for tests. No PDF reader is among our packages, so this reads the content streams itself: every FlateDecode stream
 * inflated (pdfkit compresses them), then the string operands of Tj/TJ decoded, hex (pdfkit's form) or literal, as
 * WinAnsi (the encoding of the standard fonts). Only page content counts: the document info (title) is not a stream.
 */
export function pdfPageText(pdf: Buffer): string {
  const lines: string[] = [];
  const streamStart = /<<((?:(?!>>)[\s\S])*)>>\s*stream\r?\n/g;
  const file = pdf.toString('latin1');
  for (let m = streamStart.exec(file); m; m = streamStart.exec(file)) {
    const dict = m[1];
    const length = /\/Length\s+(\d+)(?!\s+\d+\s+R)/.exec(dict);
    if (!length) continue;
    const raw = pdf.subarray(m.index + m[0].length, m.index + m[0].length + Number(length[1]));
    const content = (/\/Filter\s*\/FlateDecode/.test(dict) ? inflateSync(raw) : raw).toString('latin1');
    lines.push(...textOperators(content));
  }
  return lines.join('\n');
}

// WinAnsi differs from Latin-1 in 0x80–0x9F (PDF 32000-1 annex D). Node 20's TextDecoder('windows-1252') decodes as
// Latin-1, so the 27 code points are mapped here.
const WIN_ANSI_80_9F = '€\u0081‚ƒ„…†‡ˆ‰Š‹Œ\u008dŽ\u008f\u0090‘’“”•–—˜™š›œ\u009džŸ';
const winAnsi = (bytes: Buffer) =>
  Array.from(bytes, (b) => (b >= 0x80 && b <= 0x9f ? WIN_ANSI_80_9F[b - 0x80] : String.fromCharCode(b))).join('');

function textOperators(content: string): string[] {
  const out: string[] = [];
  const op = /\[((?:[^\]\\]|\\[\s\S])*)\]\s*TJ|(<[0-9A-Fa-f\s]*>|\((?:[^()\\]|\\[\s\S])*\))\s*Tj/g;
  for (let m = op.exec(content); m; m = op.exec(content)) {
    const operands = m[1] ?? m[2];
    const strings = operands.match(/<[0-9A-Fa-f\s]*>|\((?:[^()\\]|\\[\s\S])*\)/g) ?? [];
    out.push(strings.map(decodeString).join(''));
  }
  return out;
}

function decodeString(s: string): string {
  if (s.startsWith('<')) {
    const hex = s.slice(1, -1).replace(/\s/g, '');
    return winAnsi(Buffer.from(hex.length % 2 ? `${hex}0` : hex, 'hex'));
  }
  const escapes: Record<string, string> = { n: '\n', r: '\r', t: '\t', b: '\b', f: '\f' };
  const body = s
    .slice(1, -1)
    .replace(/\\([0-7]{1,3}|[\s\S])/g, (_all, e: string) => (/^[0-7]/.test(e) ? String.fromCharCode(parseInt(e, 8)) : (escapes[e] ?? e)));
  return winAnsi(Buffer.from(body, 'latin1'));
}
