import PDFDocument from 'pdfkit';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { pdfPageText } from './pdf-text';

/** A PDF from pdfkit (as the run report is made) with `lines` on pages of their own. */
function pdf(lines: string[], compress: boolean, font?: string): Promise<Buffer> {
  const doc = new PDFDocument({ compress, info: { Title: 'not page text' } });
  if (font) doc.font(font);
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve) => doc.on('end', () => resolve(Buffer.concat(chunks))));
  lines.forEach((l, i) => (i ? doc.addPage() : doc).text(l));
  doc.end();
  return done;
}

describe('pdfPageText', () => {
  for (const compress of [true, false]) {
    it(`reads back what pdfkit wrote, WinAnsi punctuation included, on every page (compress ${compress})`, async () => {
      const lines = ['Run report: Benzoic acid (demo) — 25 °C ± 0.1', 'Savitzky–Golay “smoothed” page 2'];
      const text = pdfPageText(await pdf(lines, compress));
      expect(text).toBe(lines.join('\n'));
      expect(text).not.toContain('not page text');
    });
  }

  for (const compress of [true, false]) {
    it(`reads an embedded font through its ToUnicode map (Inter, as the run report uses; compress ${compress})`, async () => {
      const inter = fileURLToPath(new URL('../../assets/fonts/Inter_400Regular.ttf', import.meta.url));
      const lines = ['Run report: Žluťoučký vzorek (demo) Ka ≈ 1.8×10⁻⁵ ± 2 %', 'Ω, α and Ж on page 2 — fine'];
      const text = pdfPageText(await pdf(lines, compress, inter));
      expect(text).toBe(lines.join('\n'));
    });
  }
});

