/** Numbers as the desk shows them: significant figures, a dash for nothing. */
export function num(x: number | null | undefined, digits = 4): string {
  if (x == null || !Number.isFinite(x)) return '—';
  return Number(x.toPrecision(digits)).toString();
}

/** value ± u with the uncertainty's two significant figures deciding the decimals (GUM 7.2.6 practice). */
export function withU(x: number | null | undefined, u: number | null | undefined, unit = ''): string {
  if (x == null || !Number.isFinite(x)) return '—';
  if (u == null || !Number.isFinite(u) || u <= 0) return `${num(x, 5)}${unit ? ` ${unit}` : ''}`;
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(u)));
  return `${x.toFixed(decimals)} ± ${u.toFixed(decimals)}${unit ? ` ${unit}` : ''}`;
}

export const day = (iso: string) => iso.slice(0, 10);
export const when = (iso: string) => iso.slice(0, 16).replace('T', ' ');

/** A duration as "4 s", "2 min", "1 h": coarser as it grows (it only gives a sense of freshness). */
export function ago(ms: number): string {
  const s = Math.max(0, Math.round(ms / 1000));
  if (s < 90) return `${s} s`;
  if (s < 90 * 60) return `${Math.round(s / 60)} min`;
  return `${Math.round(s / 3600)} h`;
}

/** Readable names of the engine's methods (shared/schemas/run-document.ts methodName) for reports. */
const METHOD_LABELS: Record<string, string> = {
  derivative: 'First derivative',
  secondDerivative: 'Second derivative',
  granBefore: 'Gran plot, before the equivalence point',
  granAfter: 'Gran plot, after the equivalence point',
  fit: 'Whole-curve fit',
};
export const methodLabel = (m: string) => METHOD_LABELS[m] ?? m;
