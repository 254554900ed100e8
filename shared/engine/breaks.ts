// Equivalence points from the data alone: the maximum of the Savitzky–Golay first derivative (refined by a parabola
// through the three points around it), the zero crossing of the second derivative, and Gran's linearisations
// (Gran, Analyst 77 (1952) 661) before equivalence, V·10^−pH = Ka (Ve − V), and after it (excess base),
// (V0 + V)·10^(pH − pKw) = Cb (V − Ve).
import type { SgSeries } from './savgol';

export interface Break {
  /** index of the derivative maximum */
  index: number;
  derivativeMl: number;
  uDerivativeMl: number;
  secondDerivativeMl: number | null;
  peak: number;
  /** pH rise across the part of the peak above half its height */
  jump: number;
}

export interface BreakSearch {
  breaks: Break[];
  /** the derivative is still high at the last reading: the run ends inside a break */
  endsInBreak: boolean;
  warnings: string[];
}

function median(a: number[]): number {
  if (!a.length) return NaN;
  const s = a.slice().sort((x, y) => x - y);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

/** Vertex of the parabola through three points (uneven x); null when they do not make a maximum. */
export function parabolaVertex(x0: number, y0: number, x1: number, y1: number, x2: number, y2: number): number | null {
  const d1 = (y1 - y0) / (x1 - x0);
  const d2 = (y2 - y1) / (x2 - x1);
  const a = (d2 - d1) / (x2 - x0);
  if (!(a < 0)) return null;
  // y = y0 + d1 (x − x0) + a (x − x0)(x − x1) → y' = d1 + a (2x − x0 − x1) = 0
  return 0.5 * (x0 + x1 - d1 / a);
}

/** Breaks in the curve: derivative peaks that stand well above the curve's typical slope and raise the pH clearly. */
export function findBreaks(V: ArrayLike<number>, pH: ArrayLike<number>, sg: SgSeries, noisePH: number): BreakSearch {
  const n = V.length;
  const d = sg.d1;
  const warnings: string[] = [];
  const pos: number[] = [];
  for (let i = 0; i < n; i++) if (Number.isFinite(d[i])) pos.push(Math.abs(d[i]));
  const base = median(pos);
  const cands: number[] = [];
  for (let i = 1; i < n - 1; i++) {
    if (!(d[i] > 0) || !Number.isFinite(d[i])) continue;
    if (d[i] >= d[i - 1] && d[i] > d[i + 1]) cands.push(i);
  }
  // tallest first; a lower peak joins a taller one unless the derivative falls well below both between them
  cands.sort((a, b) => d[b] - d[a] || a - b);
  const accepted: number[] = [];
  for (const i of cands) {
    if (!(d[i] > 4 * base)) continue;
    let separate = true;
    for (const k of accepted) {
      let lo = Infinity;
      for (let m = Math.min(i, k); m <= Math.max(i, k); m++) if (d[m] < lo) lo = d[m];
      if (lo > 0.3 * Math.min(d[i], d[k])) separate = false;
    }
    if (!separate) continue;
    // half-height extent and the pH rise across it
    let l = i;
    while (l > 0 && d[l - 1] > 0.5 * d[i]) l--;
    let r = i;
    while (r < n - 1 && d[r + 1] > 0.5 * d[i]) r++;
    const jump = pH[Math.min(n - 1, r + 1)] - pH[Math.max(0, l - 1)];
    if (!(jump > Math.max(0.5, 10 * noisePH))) continue;
    accepted.push(i);
  }
  accepted.sort((a, b) => a - b);

  // the run ends in a break when the last derivative values are the highest seen near the end and above 4× typical
  let endsInBreak = false;
  const last = d[n - 1];
  if (n >= 3 && last > 4 * base && last >= d[n - 2] * 0.8) {
    const lastAccepted = accepted.length ? accepted[accepted.length - 1] : -1;
    let dipAfter = false;
    for (let m = lastAccepted + 1; m < n; m++) if (lastAccepted >= 0 && d[m] < 0.3 * d[lastAccepted]) dipAfter = true;
    if (lastAccepted < 0 || dipAfter) endsInBreak = true;
  }

  const breaks: Break[] = [];
  for (const i of accepted) {
    // a break needs readings on both sides where the slope has fallen back
    let before = false;
    for (let m = i - 1; m >= 0; m--) if (d[m] < 0.5 * d[i]) { before = true; break; }
    let after = false;
    for (let m = i + 1; m < n; m++) if (d[m] < 0.5 * d[i]) { after = true; break; }
    if (!before || !after) {
      if (!after) endsInBreak = true;
      else warnings.push(`a break near ${V[i].toFixed(2)} mL starts at the first readings and is not used: record readings before it`);
      continue;
    }
    const vx = parabolaVertex(V[i - 1], d[i - 1], V[i], d[i], V[i + 1], d[i + 1]);
    const ve = vx !== null && vx >= V[i - 1] && vx <= V[i + 1] ? vx : V[i];
    // reading spacing limits how well a peak is placed (rectangular over the local spacing)
    const uD = (V[i + 1] - V[i - 1]) / 2 / Math.sqrt(3);
    // second derivative: + to − crossing nearest the peak
    let sd: number | null = null;
    let best = Infinity;
    for (let m = Math.max(0, i - 3); m < Math.min(n - 1, i + 3); m++) {
      const a = sg.d2[m];
      const b = sg.d2[m + 1];
      if (a > 0 && b <= 0) {
        const x = V[m] + (a / (a - b)) * (V[m + 1] - V[m]);
        if (Math.abs(x - ve) < best) { best = Math.abs(x - ve); sd = x; }
      }
    }
    const jumpL = Math.max(0, i - 2);
    breaks.push({ index: i, derivativeMl: ve, uDerivativeMl: uD, secondDerivativeMl: sd, peak: d[i], jump: pH[Math.min(n - 1, i + 2)] - pH[jumpL] });
  }
  return { breaks, endsInBreak, warnings };
}

export interface LineFit {
  intercept: number;
  slope: number;
  xIntercept: number;
  uXIntercept: number;
  points: number;
}

/** Ordinary least-squares line with the standard uncertainty of its x-intercept (delta method). */
export function lineFit(xs: number[], ys: number[]): LineFit | null {
  const n = xs.length;
  if (n < 3) return null;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) { mx += xs[i]; my += ys[i]; }
  mx /= n;
  my /= n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) { sxx += (xs[i] - mx) ** 2; sxy += (xs[i] - mx) * (ys[i] - my); }
  if (!(sxx > 0)) return null;
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (ys[i] - intercept - slope * xs[i]) ** 2;
  const s2 = ss / (n - 2);
  const x0 = -intercept / slope;
  const u = Math.sqrt((s2 / (slope * slope)) * (1 / n + (x0 - mx) ** 2 / sxx));
  return { intercept, slope, xIntercept: x0, uXIntercept: u, points: n };
}
