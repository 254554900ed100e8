// Number formatting for results: a value with its standard uncertainty, both rounded to the uncertainty's first
// two significant figures (GUM 7.2.6 recommends at most two significant digits for the uncertainty).
export function withU(value: number | null | undefined, u: number | null | undefined, unit = ''): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const suffix = unit ? ` ${unit}` : '';
  if (u === null || u === undefined || !Number.isFinite(u) || u <= 0) return `${value.toPrecision(4)}${suffix}`;
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(u)));
  if (decimals > 12) return `${value.toPrecision(4)}${suffix}`;
  return `${value.toFixed(decimals)} ± ${u.toFixed(decimals)}${suffix}`;
}

export function sci(value: number | null | undefined, u?: number | null): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const exp = Math.floor(Math.log10(Math.abs(value)));
  const m = value / 10 ** exp;
  if (u && Number.isFinite(u) && u > 0) return `(${m.toFixed(2)} ± ${(u / 10 ** exp).toFixed(2)}) × 10^${exp}`;
  return `${m.toFixed(2)} × 10^${exp}`;
}
