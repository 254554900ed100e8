import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

// The shipped fonts are subsets (assets/fonts/subset.sh). This reads their character map and layout features
// straight from the files (OpenType tables `cmap` and `GSUB`, per the OpenType specification) and checks that what a
// titration screen or report writes is still drawn in our own type.
const WEIGHTS = ['Inter_400Regular', 'Inter_600SemiBold', 'Inter_700Bold'];
const NEEDED = 'pH pKa Ka 0123456789 °C ± µL μ × · – — … ≈ ≤ ≥ ≠ √ → ½ ² ³ ⁻ ⁺ ₀₁₂₃₄₅₆₇₈₉ ⁰¹⁴⁵⁶⁷⁸⁹ Δ α β γ σ Σ ’ “ ” § • − ▲ ▼ ⚠ é ü ø ß Ł č ő ž';

function tables(font: Buffer): Map<string, number> {
  const out = new Map<string, number>();
  const count = font.readUInt16BE(4);
  for (let i = 0; i < count; i++) out.set(font.toString('latin1', 12 + i * 16, 16 + i * 16), font.readUInt32BE(20 + i * 16));
  return out;
}

/** Code points with a glyph, from the font's format 4 or 12 Unicode subtable. */
function codePoints(font: Buffer): Set<number> {
  const cmap = tables(font).get('cmap')!;
  const cps = new Set<number>();
  const subtables = font.readUInt16BE(cmap + 2);
  for (let i = 0; i < subtables; i++) {
    const at = cmap + font.readUInt32BE(cmap + 4 + i * 8 + 4);
    const format = font.readUInt16BE(at);
    if (format === 12) {
      const groups = font.readUInt32BE(at + 12);
      for (let g = 0; g < groups; g++) {
        const start = font.readUInt32BE(at + 16 + g * 12);
        const end = font.readUInt32BE(at + 20 + g * 12);
        for (let c = start; c <= end; c++) cps.add(c);
      }
    } else if (format === 4) {
      const segs = font.readUInt16BE(at + 6) / 2;
      for (let s = 0; s < segs; s++) {
        const end = font.readUInt16BE(at + 14 + s * 2);
        const start = font.readUInt16BE(at + 16 + segs * 2 + s * 2);
        for (let c = start; c <= end && c !== 0xffff; c++) cps.add(c);
      }
    }
  }
  return cps;
}

function substitutionFeatures(font: Buffer): Set<string> {
  const gsub = tables(font).get('GSUB')!;
  const list = gsub + font.readUInt16BE(gsub + 6);
  const n = font.readUInt16BE(list);
  return new Set(Array.from({ length: n }, (_, i) => font.toString('latin1', list + 2 + i * 6, list + 6 + i * 6)));
}

describe('shipped fonts (subsets of Inter)', () => {
  for (const weight of WEIGHTS) {
    const font = readFileSync(path.join(__dirname, '../../assets/fonts', `${weight}.ttf`));
    it(`${weight} draws the characters of the bench, results and reports`, () => {
      const cps = codePoints(font);
      const missing = [...new Set(NEEDED.replace(/ /g, ''))].filter((c) => !cps.has(c.codePointAt(0)!));
      expect(missing.join('')).toBe('');
    });
    it(`${weight} keeps tabular figures (the clock and readings line up)`, () => {
      expect(substitutionFeatures(font).has('tnum')).toBe(true);
    });
  }
});
