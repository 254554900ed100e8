// Physical constants and tables the engine uses, each with its source.

/** pKw of water, CRC Handbook 86th ed. p. 8-79 (Marshall & Franck 1981), 0–60 °C. */
const PKW_TABLE: readonly [number, number][] = [
  [0, 14.938], [10, 14.528], [20, 14.163], [25, 13.995], [30, 13.836], [40, 13.542], [50, 13.275], [60, 13.034],
];

/** pKw at `temperatureC`, quadratic (Lagrange) interpolation through the three nearest table points: the table is
 * smoothly curved, so three points follow it better than straight segments. Throws outside 0–60 °C. */
export function pKw(temperatureC: number): number {
  const t = temperatureC;
  if (!Number.isFinite(t) || t < 0 || t > 60) throw new RangeError(`pKw: temperature ${t} °C is outside the table (0–60 °C)`);
  const n = PKW_TABLE.length;
  for (let i = 0; i < n; i++) if (PKW_TABLE[i][0] === t) return PKW_TABLE[i][1];
  // index of the first table point above t
  let k = 1;
  while (k < n - 1 && PKW_TABLE[k][0] < t) k++;
  // nearest three: (k-1, k, k+1) or (k-2, k-1, k)
  let a = k - 1;
  if (a + 2 >= n) a = n - 3;
  else if (a > 0 && t - PKW_TABLE[a][0] < PKW_TABLE[k][0] - t) a = a - 1;
  const [x0, y0] = PKW_TABLE[a], [x1, y1] = PKW_TABLE[a + 1], [x2, y2] = PKW_TABLE[a + 2];
  return (
    (y0 * (t - x1) * (t - x2)) / ((x0 - x1) * (x0 - x2)) +
    (y1 * (t - x0) * (t - x2)) / ((x1 - x0) * (x1 - x2)) +
    (y2 * (t - x0) * (t - x1)) / ((x2 - x0) * (x2 - x1))
  );
}

/** Debye–Hückel A (log10, (L/mol)^½) used in the Davies equation. Quadratic in t that reproduces the
 * Manov et al. (1943) values 0.4918 at 0 °C and 0.5115 at 25 °C (from memory). */
export function daviesA(temperatureC: number): number {
  const t = temperatureC;
  return 0.4918 + 6.6098e-4 * t + 5.0231e-6 * t * t;
}

/** Davies equation: log10 γ for charge z at ionic strength I (mol/L). */
export function daviesLogGamma(z: number, ionicStrength: number, A: number): number {
  const s = Math.sqrt(ionicStrength);
  return -A * z * z * (s / (1 + s) - 0.3 * ionicStrength);
}

/** Carbonic acid (CO2(aq)) at 25 °C, Plummer & Busenberg, GCA 46 (1982) 1011; used for carbonate in the titrant
 * (the temperature dependence is not modelled: carbonate is a small correction). */
export const CARBONIC_PKA_25C: readonly [number, number] = [6.352, 10.329];

/** CIAAW conventional atomic weights (2021 abridged/conventional values). */
export const ATOMIC_WEIGHTS: Readonly<Record<string, number>> = {
  H: 1.008, C: 12.011, N: 14.007, O: 15.999, Na: 22.98976928, K: 39.0983, P: 30.973761998, S: 32.06, Cl: 35.45,
};

/** Molar mass (g/mol) of a simple formula like "C8H5KO4" (no brackets). */
export function molarMass(formula: string): number {
  const re = /([A-Z][a-z]?)(\d*)/g;
  let m = 0;
  let consumed = 0;
  for (const match of formula.matchAll(re)) {
    const w = ATOMIC_WEIGHTS[match[1]];
    if (w === undefined) throw new Error(`molarMass: unknown element ${match[1]} in ${formula}`);
    m += w * (match[2] ? Number(match[2]) : 1);
    consumed += match[0].length;
  }
  if (consumed !== formula.length || consumed === 0) throw new Error(`molarMass: cannot read formula ${formula}`);
  return m;
}

export const FORMULAS = { KHP: 'C8H5KO4', NaOH: 'NaOH', aceticAcid: 'C2H4O2', benzoicAcid: 'C7H6O2' } as const;

/** Class A 50 mL burette: ±0.05 mL (ISO 385:2005, ASTM E287). */
export const DEFAULT_BURETTE_TOLERANCE_ML = 0.05;
export const DEFAULT_BURETTE_TOLERANCE_SOURCE = 'class A 50 mL burette, ±0.05 mL (ISO 385:2005, ASTM E287)';
/** Standard uncertainty of one burette reading (common practice). */
export const DEFAULT_READING_UNCERTAINTY_ML = 0.02;
/** Analytical balance standard uncertainty used when the sample's own is not given (common practice: 0.1 mg). */
export const DEFAULT_BALANCE_U_G = 0.0001;
