// Run document (what the bench records) and analysis result (what the engine answers), as zod schemas.
// The CLI, the API bodies and the phone all validate with these, so bad input gets one set of clear messages.
import { z } from 'zod';

const num = (what: string, unit: string) =>
  z.number({ error: (iss) => (iss.input === undefined ? `${what} is required (${unit})` : `${what} must be a finite number (${unit})`) });
const positive = (what: string, unit: string) => num(what, unit).positive(`${what} must be greater than zero (${unit})`);
const nonNegative = (what: string, unit: string) => num(what, unit).nonnegative(`${what} must not be negative (${unit})`);

/** Temperatures the pKw table covers (CRC 86th ed. p. 8-79 lists 0–60 °C). */
export const RUN_TEMPERATURE_MIN_C = 0;
export const RUN_TEMPERATURE_MAX_C = 60;
export const PH_MIN = -2;
export const PH_MAX = 16;

export const readingSchema = z.object({
  timeS: nonNegative('reading timeS', 's'),
  pH: num('reading pH', 'pH').min(PH_MIN, `reading pH must be between ${PH_MIN} and ${PH_MAX}`).max(PH_MAX, `reading pH must be between ${PH_MIN} and ${PH_MAX}`),
});

export const checkpointSchema = z.object({
  timeS: nonNegative('checkpoint timeS', 's'),
  buretteMl: nonNegative('checkpoint buretteMl', 'mL'),
});

export const deliverySchema = z
  .object({
    /** Calibrated drip rate; for a drain model, the flow at burette reading 0 mL (q0). */
    rateMlPerS: positive('delivery.rateMlPerS', 'mL/s'),
    uRateMlPerS: nonNegative('delivery.uRateMlPerS', 'mL/s').optional(),
    /** Drain model dV/dt = q0 (1 − V/Vh), V the burette reading; absent → constant rate. */
    drainVolumeMl: positive('delivery.drainVolumeMl', 'mL').optional(),
    /** Tolerance (± mL, maximum permissible error) of the burette; default class A 50 mL, ±0.05 mL (ISO 385, ASTM E287). */
    buretteToleranceMl: nonNegative('delivery.buretteToleranceMl', 'mL').optional(),
    /** Standard uncertainty of one burette reading; default 0.02 mL (common practice). */
    readingUncertaintyMl: nonNegative('delivery.readingUncertaintyMl', 'mL').optional(),
    /** Burette readings taken during the run; the first is the start reading. */
    checkpoints: z.array(checkpointSchema).optional(),
  })
  .superRefine((d, ctx) => {
    const cps = d.checkpoints ?? [];
    for (let i = 1; i < cps.length; i++) {
      if (!(cps[i].timeS > cps[i - 1].timeS)) {
        ctx.addIssue({ code: 'custom', path: ['checkpoints', i, 'timeS'], message: `checkpoint times must increase (checkpoint ${i} is not after checkpoint ${i - 1})` });
      }
      if (cps[i].buretteMl < cps[i - 1].buretteMl) {
        ctx.addIssue({ code: 'custom', path: ['checkpoints', i, 'buretteMl'], message: `burette readings must not decrease during a run (checkpoint ${i}); express a refill as a new run segment` });
      }
    }
    if (d.drainVolumeMl !== undefined) {
      for (let i = 0; i < cps.length; i++) {
        if (cps[i].buretteMl >= d.drainVolumeMl) {
          ctx.addIssue({ code: 'custom', path: ['checkpoints', i, 'buretteMl'], message: `checkpoint buretteMl must be below the drain volume ${d.drainVolumeMl} mL` });
        }
      }
    }
  });

export const runDocumentSchema = z
  .object({
    sample: z.object({
      massG: positive('sample.massG', 'g').optional(),
      uMassG: nonNegative('sample.uMassG', 'g').optional(),
      volumeMl: positive('sample.volumeMl', 'mL'),
      uVolumeMl: nonNegative('sample.uVolumeMl', 'mL').optional(),
      /** Acidic protons per molecule the user counts for molar mass / concentration. */
      acidProtons: z.number().int('sample.acidProtons must be a whole number').min(1, 'sample.acidProtons must be at least 1').max(6, 'sample.acidProtons must be at most 6').optional(),
    }, { error: 'sample is required ({volumeMl, massG?, acidProtons?})' }),
    titrant: z.object({
      concentrationM: positive('titrant.concentrationM', 'mol/L'),
      uConcentrationM: nonNegative('titrant.uConcentrationM', 'mol/L').optional(),
      /** Carbonate absorbed by the NaOH (total carbonate, mol/L); concentrationM stays the sodium concentration. */
      carbonateM: nonNegative('titrant.carbonateM', 'mol/L').optional(),
    }, { error: 'titrant is required ({concentrationM})' }),
    temperatureC: num('temperatureC', '°C').min(RUN_TEMPERATURE_MIN_C, `temperatureC must be between ${RUN_TEMPERATURE_MIN_C} and ${RUN_TEMPERATURE_MAX_C} °C`).max(RUN_TEMPERATURE_MAX_C, `temperatureC must be between ${RUN_TEMPERATURE_MIN_C} and ${RUN_TEMPERATURE_MAX_C} °C`).optional(),
    delivery: deliverySchema,
    readings: z.array(readingSchema, { error: 'readings is required: a list of {timeS, pH}' }).min(1, 'readings is empty: record at least one {timeS, pH}'),
    knownMolarMassGPerMol: positive('knownMolarMassGPerMol', 'g/mol').optional(),
    uKnownMolarMassGPerMol: nonNegative('uKnownMolarMassGPerMol', 'g/mol').optional(),
    /** Number of acidic protons the whole-curve model fits (default: acidProtons, else the breaks found). */
    steps: z.number().int('steps must be a whole number').min(1, 'steps must be at least 1').max(4, 'steps must be at most 4').optional(),
    /** Activity model for the fit; default 'davies'. */
    activity: z.enum(['davies', 'none']).optional(),
    /** Fit an electrode offset (pH units) too; default false. */
    fitElectrodeOffset: z.boolean().optional(),
    label: z.string().optional(),
  })
  .superRefine((d, ctx) => {
    for (let i = 1; i < d.readings.length; i++) {
      if (!(d.readings[i].timeS > d.readings[i - 1].timeS)) {
        ctx.addIssue({ code: 'custom', path: ['readings', i, 'timeS'], message: `reading times must increase: reading ${i} (${d.readings[i].timeS} s) is not after reading ${i - 1} (${d.readings[i - 1].timeS} s)` });
      }
    }
  });

export type RunDocument = z.output<typeof runDocumentSchema>;
export type RunDocumentInput = z.input<typeof runDocumentSchema>;
export type Delivery = z.output<typeof deliverySchema>;
export type Reading = z.output<typeof readingSchema>;

// ---------- result ----------

const methodName = z.enum(['derivative', 'secondDerivative', 'granBefore', 'granAfter', 'fit']);
export type MethodName = z.infer<typeof methodName>;

export const methodEstimateSchema = z.object({ method: methodName, step: z.number(), volumeMl: z.number(), uMl: z.number().nullable(), note: z.string().optional() });
export const budgetRowSchema = z.object({ name: z.string(), value: z.number(), u: z.number(), sensitivity: z.number(), contribution: z.number() });
export type BudgetRow = z.infer<typeof budgetRowSchema>;

export const deliveryMapSchema = z.object({
  mode: z.enum(['calibration', 'fitted-rate', 'piecewise']),
  shape: z.enum(['constant', 'drain']),
  rateMlPerS: z.number(),
  drainVolumeMl: z.number().nullable(),
  startBuretteMl: z.number(),
  startTimeS: z.number(),
  segments: z.array(z.object({ fromTimeS: z.number(), toTimeS: z.number(), rateMlPerS: z.number() })),
  checkpointResiduals: z.array(z.object({ timeS: z.number(), buretteMl: z.number(), calibrationResidualMl: z.number(), mapResidualMl: z.number() })),
  buretteToleranceMl: z.number(),
  toleranceSource: z.string(),
  readingUncertaintyMl: z.number(),
});
export type DeliveryMapInfo = z.infer<typeof deliveryMapSchema>;

export const analysisResultSchema = z.object({
  equivalencePoints: z.array(z.object({ step: z.number(), volumeMl: z.number(), timeS: z.number(), pH: z.number(), uMl: z.number(), method: z.string() })),
  halfEquivalence: z.array(z.object({ step: z.number(), volumeMl: z.number(), pH: z.number() })),
  pKa: z.array(z.number()),
  pKaU: z.array(z.number()),
  Ka: z.array(z.number()),
  KaU: z.array(z.number()),
  pKaThermodynamic: z.array(z.number()),
  ionicStrengthM: z.array(z.number()),
  fit: z
    .object({
      steps: z.number(),
      activity: z.enum(['davies', 'none']),
      rmse: z.number(),
      residuals: z.array(z.number()),
      equivalenceVolumesMl: z.array(z.number()),
      uEquivalenceVolumesMl: z.array(z.number()),
      electrodeOffset: z.number().nullable(),
      uElectrodeOffset: z.number().nullable(),
      iterations: z.number(),
      converged: z.boolean(),
      pointsUsed: z.number(),
    })
    .nullable(),
  molarMassGPerMol: z.number().nullable(),
  molarMassU: z.number().nullable(),
  molarMassBudget: z.array(budgetRowSchema),
  analyteConcentrationM: z.number().nullable(),
  analyteConcentrationU: z.number().nullable(),
  purity: z.number().nullable(),
  purityU: z.number().nullable(),
  methods: z.array(methodEstimateSchema),
  delivery: deliveryMapSchema,
  volumesMl: z.array(z.number()),
  uVolumesMl: z.array(z.number()),
  derivative: z.array(z.object({ volumeMl: z.number(), dpHdV: z.number(), d2pHdV2: z.number() })),
  gran: z.object({
    before: z.array(z.object({ step: z.number(), volumeMl: z.number(), value: z.number(), used: z.boolean() })),
    after: z.array(z.object({ volumeMl: z.number(), value: z.number(), used: z.boolean() })),
  }),
  pKw: z.number(),
  temperatureC: z.number(),
  warnings: z.array(z.string()),
});
export type AnalysisResult = z.infer<typeof analysisResultSchema>;

// ---------- simulation ----------

export const simulateParamsSchema = z
  .object({
    sample: z.object({
      volumeMl: positive('sample.volumeMl', 'mL'),
      concentrationM: positive('sample.concentrationM', 'mol/L').optional(),
      amountMmol: positive('sample.amountMmol', 'mmol').optional(),
    }),
    acid: z.object({ pKa: z.array(num('acid.pKa', 'pKa').min(-2).max(16)).min(1, 'acid.pKa needs at least one value').max(4, 'acid.pKa takes at most 4 values') }),
    titrant: z.object({ concentrationM: positive('titrant.concentrationM', 'mol/L'), carbonateM: nonNegative('titrant.carbonateM', 'mol/L').optional() }),
    temperatureC: num('temperatureC', '°C').min(RUN_TEMPERATURE_MIN_C).max(RUN_TEMPERATURE_MAX_C).optional(),
    activity: z.enum(['davies', 'none']).optional(),
    electrodeOffset: num('electrodeOffset', 'pH').optional(),
    volumesMl: z.array(nonNegative('volumesMl', 'mL')).optional(),
    timesS: z.array(nonNegative('timesS', 's')).optional(),
    maxVolumeMl: positive('maxVolumeMl', 'mL').optional(),
    stepMl: positive('stepMl', 'mL').optional(),
    delivery: z.object({ rateMlPerS: positive('delivery.rateMlPerS', 'mL/s'), drainVolumeMl: positive('delivery.drainVolumeMl', 'mL').optional(), startBuretteMl: nonNegative('delivery.startBuretteMl', 'mL').optional() }).optional(),
  })
  .superRefine((p, ctx) => {
    if ((p.sample.concentrationM === undefined) === (p.sample.amountMmol === undefined)) {
      ctx.addIssue({ code: 'custom', path: ['sample'], message: 'give exactly one of sample.concentrationM or sample.amountMmol' });
    }
    if (p.timesS && !p.delivery) ctx.addIssue({ code: 'custom', path: ['timesS'], message: 'timesS needs delivery.rateMlPerS to turn time into volume' });
  });
export type SimulateParams = z.input<typeof simulateParamsSchema>;

export const standardizeInputSchema = z.object({
  standard: z.enum(['KHP']).default('KHP'),
  massG: positive('massG', 'g'),
  uMassG: nonNegative('uMassG', 'g').optional(),
  purity: positive('purity', 'mass fraction').max(1.001, 'purity is a mass fraction (at most 1)').optional(),
  uPurity: nonNegative('uPurity', 'mass fraction').optional(),
  molarMass: positive('molarMass', 'g/mol').optional(),
  uMolarMass: nonNegative('uMolarMass', 'g/mol').optional(),
  equivalenceVolumeMl: positive('equivalenceVolumeMl', 'mL'),
  uEquivalenceVolumeMl: nonNegative('uEquivalenceVolumeMl', 'mL').optional(),
  uRepeatabilityRel: nonNegative('uRepeatabilityRel', 'relative').optional(),
});
export type StandardizeInput = z.input<typeof standardizeInputSchema>;
export type StandardizeResult = { concentrationM: number; uConcentrationM: number; budget: BudgetRow[]; molarMassGPerMol: number };
