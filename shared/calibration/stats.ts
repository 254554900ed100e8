// Small statistics helpers used by several calibrations.

export function mean(xs: readonly number[]): number {
  return xs.reduce((s, x) => s + x, 0) / xs.length;
}

/** Sample standard deviation (n − 1); undefined for fewer than 2 values. */
export function sampleSd(xs: readonly number[]): number | undefined {
  if (xs.length < 2) return undefined;
  const m = mean(xs);
  return Math.sqrt(xs.reduce((s, x) => s + (x - m) ** 2, 0) / (xs.length - 1));
}

/** Ordinary least-squares line y = a + b x with R² and residuals. Needs at least 2 distinct x. */
export function linearFit(xs: readonly number[], ys: readonly number[]) {
  const mx = mean(xs);
  const my = mean(ys);
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < xs.length; i++) {
    sxx += (xs[i] - mx) ** 2;
    sxy += (xs[i] - mx) * (ys[i] - my);
    syy += (ys[i] - my) ** 2;
  }
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  const residuals = xs.map((x, i) => ys[i] - (intercept + slope * x));
  const ssr = residuals.reduce((s, r) => s + r * r, 0);
  return { slope, intercept, residuals, r2: syy > 0 ? 1 - ssr / syy : 1 };
}
