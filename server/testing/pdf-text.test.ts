import PDFDocument from 'pdfkit';
import { describe, expect, it } from 'vitest';
import { pdfPageText } from './pdf-text';

/** A PDF from pdfkit (as the run report is made) with `lines` on pages of their own. */
function pdf(lines: string[], compress: boolean): Promise<Buffer> {
  const doc = new PDFDocument({ compress, info: { Title: 'not page text' } });
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
});
