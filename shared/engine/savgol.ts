// Savitzky–Golay smoothing and derivatives for unevenly spaced data (Anal. Chem. 36 (1964) 1627): at each point a
// polynomial is fitted by least squares to the neighbouring points in their real x positions, and its value and
// derivatives at the point are taken. On even spacing this reproduces the published convolution coefficients.

const MAX_DEG = 4;

/** Scratch for the small normal-equation solves, reused so a whole series does not allocate per point. */
const nm = new Float64Array((MAX_DEG + 1) * (MAX_DEG + 2));
const coef = new Float64Array(MAX_DEG + 1);

/** Fit y ≈ Σ c_k u^k over xs[lo..hi] with u = (x − x0)/scale; writes `coef`; false when singular. */
function fitLocal(xs: ArrayLike<number>, ys: ArrayLike<number>, lo: number, hi: number, x0: number, scale: number, deg: number): boolean {
  const m = deg + 1;
  const w = m + 1;
  nm.fill(0, 0, m * w);
  for (let i = lo; i <= hi; i++) {
    const u = (xs[i] - x0) / scale;
    const y = ys[i];
    // row r, column c of the normal matrix collects u^(r+c)
    let pk = 1;
    for (let r = 0; r < m; r++) {
      let pc = pk;
      for (let c = 0; c < m; c++) {
        nm[r * w + c] += pc;
        pc *= u;
      }
      nm[r * w + m] += pk * y;
      pk *= u;
    }
  }
  // Gaussian elimination with partial pivoting
  for (let c = 0; c < m; c++) {
    let p = c;
    for (let r = c + 1; r < m; r++) if (Math.abs(nm[r * w + c]) > Math.abs(nm[p * w + c])) p = r;
    if (Math.abs(nm[p * w + c]) < 1e-12) return false;
    if (p !== c) for (let k = 0; k < w; k++) { const t = nm[c * w + k]; nm[c * w + k] = nm[p * w + k]; nm[p * w + k] = t; }
    for (let r = c + 1; r < m; r++) {
      const f = nm[r * w + c] / nm[c * w + c];
      if (f !== 0) for (let k = c; k < w; k++) nm[r * w + k] -= f * nm[c * w + k];
    }
  }
  for (let r = m - 1; r >= 0; r--) {
    let s = nm[r * w + m];
    for (let k = r + 1; k < m; k++) s -= nm[r * w + k] * coef[k];
    coef[r] = s / nm[r * w + r];
  }
  return true;
}

function windowAround(n: number, i: number, half: number): [number, number] {
  let lo = i - half;
  let hi = i + half;
  if (lo < 0) { hi = Math.min(n - 1, hi - lo); lo = 0; }
  if (hi > n - 1) { lo = Math.max(0, lo - (hi - (n - 1))); hi = n - 1; }
  return [lo, hi];
}

export interface SgSeries {
  smooth: Float64Array;
  d1: Float64Array;
  d2: Float64Array;
}

/** Smoothed value, first and second derivative at every x, from a degree-`deg` local fit over 2·half+1 points
 * (the window slides inward at the ends). NaN where the window is degenerate (e.g. repeated x). */
export function savitzkyGolay(xs: ArrayLike<number>, ys: ArrayLike<number>, half = 2, deg = 2, out?: SgSeries): SgSeries {
  const n = xs.length;
  const res = out ?? { smooth: new Float64Array(n), d1: new Float64Array(n), d2: new Float64Array(n) };
  for (let i = 0; i < n; i++) {
    const [lo, hi] = windowAround(n, i, half);
    const d = Math.min(deg, hi - lo);
    const scale = Math.max(1e-12, (xs[hi] - xs[lo]) / 2);
    if (d < 1 || !fitLocal(xs, ys, lo, hi, xs[i], scale, d)) {
      res.smooth[i] = ys[i];
      res.d1[i] = NaN;
      res.d2[i] = NaN;
      continue;
    }
    res.smooth[i] = coef[0];
    res.d1[i] = coef[1] / scale;
    res.d2[i] = d >= 2 ? (2 * coef[2]) / (scale * scale) : 0;
  }
  return res;
}

/** Value of a local degree-`deg` least-squares polynomial at x0 through the 2·half+1 points nearest x0. */
export function localPolyValue(xs: ArrayLike<number>, ys: ArrayLike<number>, x0: number, half = 2, deg = 2): number {
  const n = xs.length;
  // nearest index by bisection (xs ascending)
  let a = 0;
  let b = n - 1;
  while (b - a > 1) {
    const mid = (a + b) >> 1;
    if (xs[mid] <= x0) a = mid;
    else b = mid;
  }
  const i = Math.abs(xs[a] - x0) <= Math.abs(xs[b] - x0) ? a : b;
  const [lo, hi] = windowAround(n, i, half);
  const d = Math.min(deg, hi - lo);
  const scale = Math.max(1e-12, (xs[hi] - xs[lo]) / 2);
  if (d < 1 || !fitLocal(xs, ys, lo, hi, x0, scale, d)) return ys[i];
  return coef[0];
}

/** Convolution weights of the derivative of order `order` for 2·half+1 evenly spaced points (spacing 1), as in the
 * 1964 tables: obtained by fitting unit vectors. */
export function sgWeights(half: number, deg: number, order: 0 | 1 | 2): number[] {
  const m = 2 * half + 1;
  const xs = Array.from({ length: m }, (_, k) => k - half);
  const w: number[] = [];
  for (let k = 0; k < m; k++) {
    const ys = xs.map((_, j) => (j === k ? 1 : 0));
    fitLocal(xs, ys, 0, m - 1, 0, 1, deg);
    w.push(order === 0 ? coef[0] : order === 1 ? coef[1] : 2 * coef[2]);
  }
  return w;
}
