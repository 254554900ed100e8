import { inflateSync } from 'node:zlib';

/**
 * The text a PDF shows on its pages, one line per text-showing operator (Tj, or TJ with its kerning numbers dropped),
 * for tests. No PDF reader is among our packages, so this reads the file itself: every object with a stream is
 * inflated (pdfkit compresses them); in content streams the font chosen by Tf decides how a string is read — through
 * the font's ToUnicode CMap for an embedded font (pdfkit writes two-byte glyph codes), as WinAnsi for a standard
 * font. Only page content counts: the document info (title) is not a stream.
 */
export function pdfPageText(pdf: Buffer): string {
  const { bodies, streams } = readObjects(pdf);
  // Font resource names (/F1) → the font object's CMap, for fonts that have one.
  const cmapOfObject = new Map<number, Map<number, string>>();
  for (const [n, body] of bodies) {
    const ref = /\/ToUnicode\s+(\d+)\s+0\s+R/.exec(body);
    const cmap = ref && streams.get(Number(ref[1]));
    if (cmap) cmapOfObject.set(n, parseCMap(cmap));
  }
  const fonts = new Map<string, Map<number, string> | null>();
  for (const body of bodies.values()) {
    for (const dict of body.matchAll(/\/Font\s*<<([^<>]*)>>/g)) {
      for (const [, name, obj] of dict[1].matchAll(/\/([^\s/<>[\]()]+)\s+(\d+)\s+0\s+R/g)) fonts.set(name, cmapOfObject.get(Number(obj)) ?? null);
    }
  }
  const lines: string[] = [];
  for (const content of streams.values()) if (/\bBT\b/.test(content) && /T[jJ]\b/.test(content)) lines.push(...textOperators(content, fonts));
  return lines.join('\n');
}

/** Every indirect object's text (latin1, so string index = byte offset) and its stream, inflated when compressed. */
function readObjects(pdf: Buffer) {
  const file = pdf.toString('latin1');
  const bodies = new Map<number, string>();
  const streams = new Map<number, string>();
  const start = /(\d+)\s+0\s+obj\b/g;
  for (let m = start.exec(file); m; m = start.exec(file)) {
    const n = Number(m[1]);
    const from = m.index + m[0].length;
    const head = /^\s*<<((?:(?!>>\s*(?:stream|endobj))[\s\S])*)>>\s*(stream\r?\n)?/.exec(file.slice(from, from + 20_000));
    const end = file.indexOf('endobj', from);
    if (!head || !head[2]) {
      bodies.set(n, file.slice(from, end < 0 ? undefined : end));
      continue;
    }
    const dict = head[1];
    bodies.set(n, dict);
    const length = /\/Length\s+(\d+)(?!\s+\d+\s+R)/.exec(dict);
    if (!length) continue;
    const at = from + head[0].length;
    const raw = pdf.subarray(at, at + Number(length[1]));
    try {
      streams.set(n, (/\/Filter\s*\/FlateDecode/.test(dict) ? inflateSync(raw) : raw).toString('latin1'));
    } catch {
      /* a stream this reader cannot open is not page text */
    }
    start.lastIndex = at + Number(length[1]);
  }
  return { bodies, streams };
}

/** A ToUnicode CMap's bfchar and bfrange entries: code → text (PDF 32000-1 §9.10.3). */
function parseCMap(cmap: string): Map<number, string> {
  const out = new Map<number, string>();
  const utf16 = (hex: string) => String.fromCharCode(...(hex.match(/[0-9a-fA-F]{4}/g) ?? []).map((h) => parseInt(h, 16)));
  for (const block of cmap.matchAll(/beginbfchar([\s\S]*?)endbfchar/g)) {
    for (const [, src, dst] of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) out.set(parseInt(src, 16), utf16(dst));
  }
  for (const block of cmap.matchAll(/beginbfrange([\s\S]*?)endbfrange/g)) {
    for (const [, lo, hi, one, list] of block[1].matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>\s*(?:<([0-9a-fA-F]+)>|\[([^\]]*)\])/g)) {
      const a = parseInt(lo, 16);
      const b = parseInt(hi, 16);
      if (list !== undefined) {
        const dsts = list.match(/<([0-9a-fA-F]+)>/g) ?? [];
        for (let c = a; c <= b && c - a < dsts.length; c++) out.set(c, utf16(dsts[c - a].slice(1, -1)));
      } else {
        const base = utf16(one);
        for (let c = a; c <= b; c++) out.set(c, base.slice(0, -1) + String.fromCharCode(base.charCodeAt(base.length - 1) + (c - a)));
      }
    }
  }
  return out;
}

// WinAnsi differs from Latin-1 in 0x80–0x9F (PDF 32000-1 annex D). Node 20's TextDecoder('windows-1252') decodes as
// Latin-1, so the 27 code points are mapped here.
const WIN_ANSI_80_9F = '€\u0081‚ƒ„…†‡ˆ‰Š‹Œ\u008dŽ\u008f\u0090‘’“”•–—˜™š›œ\u009džŸ';
const winAnsi = (bytes: Buffer) =>
  Array.from(bytes, (b) => (b >= 0x80 && b <= 0x9f ? WIN_ANSI_80_9F[b - 0x80] : String.fromCharCode(b))).join('');

function textOperators(content: string, fonts: Map<string, Map<number, string> | null>): string[] {
  const out: string[] = [];
  let cmap: Map<number, string> | null = null;
  const op = /\/([^\s/<>[\]()]+)\s+[-\d.]+\s+Tf|\[((?:[^\]\\]|\\[\s\S])*)\]\s*TJ|(<[0-9A-Fa-f\s]*>|\((?:[^()\\]|\\[\s\S])*\))\s*Tj/g;
  for (let m = op.exec(content); m; m = op.exec(content)) {
    if (m[1] !== undefined) {
      cmap = fonts.get(m[1]) ?? null;
      continue;
    }
    const operands = m[2] ?? m[3];
    const strings = operands.match(/<[0-9A-Fa-f\s]*>|\((?:[^()\\]|\\[\s\S])*\)/g) ?? [];
    out.push(strings.map((s) => decodeString(s, cmap)).join(''));
  }
  return out;
}

function decodeString(s: string, cmap: Map<number, string> | null): string {
  let bytes: Buffer;
  if (s.startsWith('<')) {
    const hex = s.slice(1, -1).replace(/\s/g, '');
    bytes = Buffer.from(hex.length % 2 ? `${hex}0` : hex, 'hex');
  } else {
    const escapes: Record<string, string> = { n: '\n', r: '\r', t: '\t', b: '\b', f: '\f' };
    const body = s
      .slice(1, -1)
      .replace(/\\([0-7]{1,3}|[\s\S])/g, (_all, e: string) => (/^[0-7]/.test(e) ? String.fromCharCode(parseInt(e, 8)) : (escapes[e] ?? e)));
    bytes = Buffer.from(body, 'latin1');
  }
  if (!cmap) return winAnsi(bytes);
  // An embedded font written by pdfkit: two-byte codes (Identity-H).
  let text = '';
  for (let i = 0; i + 1 < bytes.length; i += 2) text += cmap.get(bytes.readUInt16BE(i)) ?? '\uFFFD';
  return text;
}
