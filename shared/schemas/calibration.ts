// Input schemas for the lab's calibrations (drip rates, burettes, electrodes).
// The computations in shared/calibration/ parse their input with these, so every caller (CLI, API, phone)
// gets the same clear messages for bad input.
import { z } from 'zod';

/** Range the computations accept for a water or buffer temperature. Tanaka et al. (2001) is fitted for 0–40 °C;
 * 40–60 °C is accepted with a warning (see shared/calibration/water.ts). */
export const TEMPERATURE_MIN_C = 0;
export const TEMPERATURE_MAX_C = 60;

const temperatureC = (what: string) =>
  z
    .number({ error: `${what} must be a number (°C)` })
    .min(TEMPERATURE_MIN_C, `${what} must be at least ${TEMPERATURE_MIN_C} °C`)
    .max(TEMPERATURE_MAX_C, `${what} must be at most ${TEMPERATURE_MAX_C} °C`);

const positive = (what: string, unit: string) =>
  z.number({ error: `${what} must be a number (${unit})` }).positive(`${what} must be greater than zero (${unit})`);

const nonNegative = (what: string, unit: string) =>
  z.number({ error: `${what} must be a number (${unit})` }).nonnegative(`${what} must not be negative (${unit})`);

// ---------- air ----------

export const airConditionsSchema = z.object({
  airPressureHPa: z
    .number({ error: 'airPressureHPa must be a number (hPa)' })
    .min(500, 'airPressureHPa must be at least 500 hPa')
    .max(1100, 'airPressureHPa must be at most 1100 hPa')
    .optional(),
  relativeHumidityPct: z
    .number({ error: 'relativeHumidityPct must be a number (%)' })
    .min(0, 'relativeHumidityPct must be between 0 and 100 %')
    .max(100, 'relativeHumidityPct must be between 0 and 100 %')
    .optional(),
  airTempC: temperatureC('airTempC').optional(),
});
export type AirConditionsInput = z.input<typeof airConditionsSchema>;

// ---------- gravimetric delivery ----------

export const gravimetricReplicateSchema = airConditionsSchema.extend({
  massG: positive('massG', 'g'),
  durationS: positive('durationS', 's'),
  waterTempC: temperatureC('waterTempC'),
  /** Standard uncertainty of the weighing; default 0.001 g (common practice). */
  uMassG: nonNegative('uMassG', 'g').optional(),
  /** Standard uncertainty of the tapped duration; default 0.1 s (common practice). */
  uDurationS: nonNegative('uDurationS', 's').optional(),
});
export type GravimetricReplicateInput = z.input<typeof gravimetricReplicateSchema>;

export const gravimetricInputSchema = z.union(
  [gravimetricReplicateSchema, z.array(gravimetricReplicateSchema).min(1, 'give at least one delivery')],
  { error: 'expected a delivery {massG, durationS, waterTempC, ...} or an array of them' },
);
export type GravimetricInput = z.input<typeof gravimetricInputSchema>;

// ---------- mark timing ----------

export const markTimingPointSchema = z.object({
  timeS: nonNegative('timeS', 's'),
  buretteMl: nonNegative('buretteMl', 'mL'),
});

export const markTimingInputSchema = z
  .object({
    points: z.array(markTimingPointSchema).min(4, 'tap at least 4 graduations (the first one is the reference)'),
  })
  .superRefine((v, ctx) => {
    for (let i = 1; i < v.points.length; i++) {
      const a = v.points[i - 1];
      const b = v.points[i];
      if (!(b.timeS > a.timeS)) {
        ctx.addIssue({ code: 'custom', path: ['points', i, 'timeS'], message: `times must increase (point ${i + 1})` });
      }
      if (!(b.buretteMl > a.buretteMl)) {
        ctx.addIssue({
          code: 'custom',
          path: ['points', i, 'buretteMl'],
          message: `burette readings must increase as it drains (point ${i + 1})`,
        });
      }
    }
  });
export type MarkTimingInput = z.input<typeof markTimingInputSchema>;

// ---------- drop counter ----------

export const dropCountInputSchema = z
  .object({
    /** Either the tap times (one tap per drop) ... */
    tapTimesS: z.array(nonNegative('tap time', 's')).min(2, 'tap at least 2 drops').optional(),
    /** ... or a count of drops over a timed interval. */
    drops: z.number().int('drops must be a whole number').positive('drops must be greater than zero').optional(),
    intervalS: positive('intervalS', 's').optional(),
    /** Gravimetric rate of the same drip setting, to give the drop volume. */
    rateMlPerS: positive('rateMlPerS', 'mL/s').optional(),
  })
  .superRefine((v, ctx) => {
    const byTaps = v.tapTimesS !== undefined;
    const byCount = v.drops !== undefined || v.intervalS !== undefined;
    if (byTaps === byCount) {
      ctx.addIssue({ code: 'custom', message: 'give either tapTimesS, or drops with intervalS' });
      return;
    }
    if (byCount && (v.drops === undefined || v.intervalS === undefined)) {
      ctx.addIssue({ code: 'custom', message: 'drops and intervalS go together' });
    }
    if (byTaps) {
      const t = v.tapTimesS!;
      for (let i = 1; i < t.length; i++) {
        if (!(t[i] > t[i - 1])) {
          ctx.addIssue({ code: 'custom', path: ['tapTimesS', i], message: `tap times must increase (tap ${i + 1})` });
        }
      }
    }
  });
export type DropCountInput = z.input<typeof dropCountInputSchema>;

// ---------- burettes ----------

export const BURETTE_CLASSES = ['A', 'B'] as const;
export const buretteSchema = z.object({
  identifier: z.string().trim().min(1, 'identifier is required'),
  capacityMl: positive('capacityMl', 'mL'),
  class: z.enum(BURETTE_CLASSES, { error: 'class must be A or B' }),
});
export type BuretteInput = z.input<typeof buretteSchema>;

// ---------- electrodes ----------

/** IUPAC primary pH standards Halfmark knows (Buck et al., Pure Appl. Chem. 74 (2002) 2169). */
export const IUPAC_BUFFER_IDS = ['KHP', 'phosphate', 'borax'] as const;
export type IupacBufferId = (typeof IUPAC_BUFFER_IDS)[number];

export const electrodePointSchema = z
  .object({
    pH: z.number({ error: 'pH must be a number' }).min(0, 'pH must be 0–14').max(14, 'pH must be 0–14').optional(),
    buffer: z.enum(IUPAC_BUFFER_IDS, { error: `buffer must be one of ${IUPAC_BUFFER_IDS.join(', ')}` }).optional(),
    mV: z
      .number({ error: 'mV must be a number' })
      .min(-2000, 'mV must be within ±2000 mV')
      .max(2000, 'mV must be within ±2000 mV'),
  })
  .refine((p) => (p.pH === undefined) !== (p.buffer === undefined), {
    message: 'each point needs either pH or buffer (not both)',
  });

export const electrodeLimitsSchema = z
  .object({
    minSlopePct: z.number().default(95),
    maxSlopePct: z.number().default(105),
    maxAbsOffsetMv: z.number().nonnegative().default(30),
  })
  .refine((l) => l.minSlopePct < l.maxSlopePct, { message: 'minSlopePct must be below maxSlopePct' });
export type ElectrodeLimitsInput = z.input<typeof electrodeLimitsSchema>;

export const electrodeCalibrationInputSchema = z.object({
  temperatureC: temperatureC('temperatureC'),
  points: z
    .array(electrodePointSchema)
    .min(2, 'an electrode calibration needs at least 2 buffer points')
    .max(5, 'at most 5 buffer points'),
  limits: electrodeLimitsSchema.optional(),
});
export type ElectrodeCalibrationInput = z.input<typeof electrodeCalibrationInputSchema>;

// ---------- CLI / API request shapes ----------

/** drip-rate request: a delivery, an array of them, or `{deliveries, maxRelSdPct?}` to also judge repeatability. */
export const dripRateRequestSchema = z.union(
  [
    z.object({
      deliveries: z.array(gravimetricReplicateSchema).min(1, 'give at least one delivery'),
      maxRelSdPct: positive('maxRelSdPct', '%').optional(),
    }),
    gravimetricInputSchema,
  ],
  { error: 'expected a delivery {massG, durationS, waterTempC, ...}, an array of them, or {deliveries: [...]}' },
);
export type DripRateRequest = z.input<typeof dripRateRequestSchema>;
