import Papa from 'papaparse';
import { fileURLToPath } from 'node:url';
import PDFDocument from 'pdfkit';
import type { RunDetail } from '../../shared/schemas/desk';
import type { AnalysisResult } from '../../shared/schemas/run-document';

/**
 * Exports of one run. CSV: text cells that a spreadsheet would run as a formula (= + - @ tab CR first) are
 * prefixed with an apostrophe and quoted (papaparse's escapeFormulae, the OWASP "CSV injection" advice); numbers stay
 * numbers. PDF: pdfkit, with the curve drawn as vectors.
 */
export function toCsv(fields: string[], rows: unknown[][]): string {
  return Papa.unparse({ fields, data: rows }, { escapeFormulae: true, newline: '\r\n' });
}

export function readingsCsv(d: RunDetail): string {
  const fields = ['reading_id', 'kind', 'time_s', 'volume_ml', 'pH', 'mV', 'replaces_id', 'reason', 'in_force', 'received_at', 'sample', 'run_id'];
  const rows = d.readings.map((r) => [
    r.id,
    r.kind,
    r.timeS,
    r.volumeMl,
    r.pH,
    r.mV,
    r.replacesId ?? '',
    r.reason ?? '',
    !r.supersededBy && r.kind !== 'deletion',
    r.receivedAt,
    d.run.sampleName,
    d.run.id,
  ]);
  return toCsv(fields, rows);
}

type Row = [string, number | null, number | null, string, string];

export function resultRows(a: AnalysisResult | null): Row[] {
  if (!a) return [];
  const out: Row[] = [];
  for (const e of a.equivalencePoints) out.push([`Equivalence volume (step ${e.step})`, e.volumeMl, e.uMl, 'mL', e.method]);
  a.pKa.forEach((p, i) => out.push([`pKa${a.pKa.length > 1 ? i + 1 : ''} (apparent)`, p, a.pKaU[i] ?? null, '', a.fit ? 'fit' : 'half-equivalence']));
  a.Ka.forEach((k, i) => out.push([`Ka${a.Ka.length > 1 ? i + 1 : ''}`, k, a.KaU[i] ?? null, 'mol/L', a.fit ? 'fit' : 'half-equivalence']));
  a.pKaThermodynamic.forEach((p, i) => out.push([`pKa${a.pKa.length > 1 ? i + 1 : ''} (thermodynamic, Davies)`, p, null, '', 'activity correction']));
  if (a.molarMassGPerMol !== null) out.push(['Molar mass', a.molarMassGPerMol, a.molarMassU, 'g/mol', 'from Ve and sample mass']);
  if (a.analyteConcentrationM !== null) out.push(['Analyte concentration', a.analyteConcentrationM, a.analyteConcentrationU, 'mol/L', 'from Ve and sample volume']);
  if (a.purity !== null) out.push(['Purity', a.purity, a.purityU, 'mass fraction', 'from Ve and known molar mass']);
  for (const m of a.methods) out.push([`Ve by ${m.method} (step ${m.step})`, m.volumeMl, m.uMl, 'mL', m.note ?? m.method]);
  out.push(['pKw at run temperature', a.pKw, null, '', 'table']);
  out.push(['Temperature', a.temperatureC, null, '°C', 'recorded']);
  return out;
}

export function resultsCsv(d: RunDetail): string {
  const a = d.analysis as AnalysisResult | null;
  const rows: unknown[][] = resultRows(a).map(([q, v, u, unit, method]) => [d.run.id, d.run.sampleName, q, v, u, unit, method]);
  for (const w of a?.warnings ?? []) rows.push([d.run.id, d.run.sampleName, 'Warning', null, null, '', w]);
  return toCsv(['run_id', 'sample', 'quantity', 'value', 'standard_uncertainty', 'unit', 'method'], rows);
}

const fmt = (x: number | null | undefined, digits = 4) => (x == null || !Number.isFinite(x) ? '—' : Number(x.toPrecision(digits)).toString());

/**
 * The report's font: Inter (SIL OFL, shipped in assets/fonts), embedded and subset by pdfkit, so a sample name in any
 * Latin, Greek or Cyrillic script, "≈" or "⁻⁵" prints as typed (the PDF standard fonts only cover WinAnsi).
 */
const REPORT_FONT = fileURLToPath(new URL('../../assets/fonts/Inter_400Regular.ttf', import.meta.url));

/** The run report as PDF bytes. */
export function reportPdf(d: RunDetail, meta: { labName: string; generatedAt: Date }): Promise<Buffer> {
  const doc = new PDFDocument({ size: 'A4', margin: 50, info: { Title: `Run report: ${d.run.sampleName}`, Producer: 'Halfmark' } });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  const a = d.analysis as AnalysisResult | null;

  doc.font(REPORT_FONT);
  doc.fontSize(18).text(`Run report: ${d.run.sampleName}`);
  doc.moveDown(0.3).fontSize(10).fillColor('#444');
  doc.text(`${meta.labName}${d.run.isDemo ? ' — demo data, invented' : ''}`);
  doc.text(`Analyst: ${d.run.analystName}   Recorded: ${d.run.createdAt.slice(0, 16).replace('T', ' ')} UTC   Status: ${d.run.status}   Revision ${d.revision.revision}`);
  doc.text(`Run id: ${d.run.id}   Report made ${meta.generatedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC`);
  doc.fillColor('black').moveDown();

  if (a) drawCurve(doc, d, a);
  else doc.fontSize(11).text(`No analysis: ${d.analysisError ?? 'not enough readings.'}`);

  doc.moveDown().fontSize(13).text('Results');
  doc.fontSize(10);
  for (const [q, v, u, unit, method] of resultRows(a)) {
    doc.text(`${q}: ${fmt(v, 5)}${u != null ? ` ± ${fmt(u, 2)}` : ''} ${unit}   (${method})`);
  }
  for (const w of a?.warnings ?? []) doc.fillColor('#8a4b00').text(`Warning: ${w}`).fillColor('black');

  doc.moveDown().fontSize(13).text('Calibrations and titrant used');
  doc.fontSize(10);
  for (const c of d.calibrations) doc.text(`${c.label}: ${c.value} — ${c.state}`);

  doc.moveDown().fontSize(13).text('Review');
  doc.fontSize(10);
  if (d.revision.lockedAt) {
    doc.text(`Approved by ${d.revision.approvedByName ?? '?'} at ${d.revision.lockedAt.slice(0, 19).replace('T', ' ')} UTC (revision ${d.revision.revision}).`);
    doc.text(`Meaning of the signature: ${d.revision.approvalMeaning ?? ''}`);
  } else doc.text('Not approved.');
  for (const r of d.review) doc.text(`${r.at.slice(0, 16).replace('T', ' ')}  ${r.kind} by ${r.actorName}${r.comment ? `: ${r.comment}` : ''}`);

  const corrections = d.readings.filter((r) => r.replacesId);
  doc.moveDown().fontSize(13).text(`Readings (${d.readings.filter((r) => r.kind === 'reading').length}, ${corrections.length} corrections)`);
  doc.fontSize(8);
  for (const r of d.readings) {
    const flag = r.supersededBy ? ' (superseded)' : r.kind === 'deletion' ? ` withdraws ${r.replacesId?.slice(0, 8)}` : r.replacesId ? ` corrects ${r.replacesId.slice(0, 8)}` : '';
    doc.text(`${fmt(r.timeS, 6)} s   ${fmt(r.volumeMl, 5)} mL   pH ${fmt(r.pH, 4)}${r.mV != null ? `   ${r.mV} mV` : ''}${flag}${r.reason ? ` — ${r.reason}` : ''}`);
  }
  doc.end();
  return done;
}

function drawCurve(doc: PDFKit.PDFDocument, d: RunDetail, a: AnalysisResult) {
  const pts = d.readings.filter((r) => !r.supersededBy && r.kind !== 'deletion' && r.pH != null && r.volumeMl != null) as { volumeMl: number; pH: number }[];
  if (pts.length < 2) return;
  const x0 = 90, y0 = doc.y + 10, w = 420, h = 200;
  const vMax = Math.max(...pts.map((p) => p.volumeMl)) || 1;
  const pMin = Math.floor(Math.min(...pts.map((p) => p.pH)));
  const pMax = Math.ceil(Math.max(...pts.map((p) => p.pH)));
  const X = (v: number) => x0 + (v / vMax) * w;
  const Y = (p: number) => y0 + h - ((p - pMin) / (pMax - pMin || 1)) * h;
  doc.save().lineWidth(0.5).strokeColor('#999').rect(x0, y0, w, h).stroke();
  doc.fontSize(8).fillColor('#444');
  for (let p = pMin; p <= pMax; p += Math.max(1, Math.round((pMax - pMin) / 6))) doc.text(String(p), x0 - 20, Y(p) - 4, { width: 15, align: 'right' });
  for (let i = 0; i <= 5; i++) doc.text(fmt((vMax * i) / 5, 3), X((vMax * i) / 5) - 15, y0 + h + 4, { width: 30, align: 'center' });
  doc.text('Volume of titrant (mL)', x0, y0 + h + 16, { width: w, align: 'center' });
  doc.text('pH', x0 - 45, y0 + h / 2, { width: 20 });
  doc.lineWidth(1.2).strokeColor('#1f5fa8');
  doc.moveTo(X(pts[0].volumeMl), Y(pts[0].pH));
  for (const p of pts.slice(1)) doc.lineTo(X(p.volumeMl), Y(p.pH));
  doc.stroke();
  doc.strokeColor('#b3261e').dash(3, { space: 3 });
  for (const e of a.equivalencePoints) doc.moveTo(X(e.volumeMl), y0).lineTo(X(e.volumeMl), y0 + h).stroke();
  doc.undash().restore();
  doc.fillColor('black');
  doc.y = y0 + h + 32;
  doc.x = 50;
}
