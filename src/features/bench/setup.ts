// What the analyst sets up before a run, validated with the shared run-document field schemas so the form, the
// engine and the server give the same messages. Titrant, drip rate and electrode each say where they came from:
// 'manual' now; 'lab' when a lab calibration or titrant lot is chosen (issue 7), with its id.
import { z } from 'zod';
import { deliverySchema, runDocumentSchema } from '../../../shared/schemas/run-document';

const docShape = runDocumentSchema.shape;
const sampleShape = docShape.sample.shape;
const titrantShape = docShape.titrant.shape;
const deliveryShape = deliverySchema.shape;

export const runSetupSchema = z.object({
  label: z.string().trim().min(1, 'Give the sample a name.').max(120, 'Keep the name under 120 characters.'),
  sample: z.object({
    massG: sampleShape.massG,
    volumeMl: sampleShape.volumeMl,
    acidProtons: sampleShape.acidProtons,
    /** Estimates for the plan only; the analysis does not use them. */
    estMolarMassGPerMol: z.number().positive('Must be greater than zero (g/mol).').optional(),
    estConcentrationM: z.number().positive('Must be greater than zero (mol/L).').optional(),
    estPKa: z.array(z.number().min(-2).max(16)).max(4).optional(),
  }),
  titrant: z.object({
    source: z.enum(['manual', 'lab']),
    lotId: z.string().optional(),
    /** The lot's standardisations whose concentration this is (chosen from the lab's calibrations). */
    standardisationIds: z.array(z.string()).optional(),
    concentrationM: titrantShape.concentrationM,
    uConcentrationM: titrantShape.uConcentrationM,
    /** Date the lot was standardised (YYYY-MM-DD). */
    standardisedOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use the form YYYY-MM-DD.').optional(),
  }),
  delivery: z.object({
    source: z.enum(['manual', 'lab']),
    calibrationId: z.string().optional(),
    rateMlPerS: deliveryShape.rateMlPerS,
    uRateMlPerS: deliveryShape.uRateMlPerS,
    drainVolumeMl: deliveryShape.drainVolumeMl,
    startBuretteMl: z.number().min(0, 'Must not be negative (mL).').max(100, 'A burette reading is at most 100 mL.'),
  }),
  electrode: z
    .object({
      source: z.enum(['manual', 'lab']),
      calibrationId: z.string().optional(),
      slopeMvPerPH: z.number().refine((s) => s !== 0, 'The slope cannot be zero.'),
      offsetMv: z.number(),
      temperatureC: z.number().min(0).max(60),
      calibratedAtMs: z.number().int().positive(),
    })
    .optional(),
  temperatureC: docShape.temperatureC,
});
export type RunSetup = z.output<typeof runSetupSchema>;

/** Electrode calibrations older than this are flagged until the lab sets its own limit (common practice: daily). */
export const DEFAULT_ELECTRODE_MAX_AGE_H = 24;

/** Setup warnings the analyst must see before starting; none of them blocks the run. */
export function setupWarnings(s: RunSetup, nowMs: number, electrodeMaxAgeH = DEFAULT_ELECTRODE_MAX_AGE_H): string[] {
  const w: string[] = [];
  if (s.delivery.source === 'manual') {
    w.push('Drip rate typed by hand, not a lab calibration: volumes (and so Ve, molar mass) are only as good as that number. Add burette checkpoints during the run.');
  }
  if (s.titrant.source === 'manual') w.push('Titrant concentration typed by hand, not a standardised lot of the lab.');
  if (!s.electrode) w.push('No electrode calibration chosen: readings typed in mV will be kept as mV without pH.');
  else {
    const ageH = (nowMs - s.electrode.calibratedAtMs) / 3_600_000;
    if (ageH > electrodeMaxAgeH) w.push(`Electrode calibration is ${Math.floor(ageH)} h old (limit ${electrodeMaxAgeH} h): calibrate again before the run.`);
  }
  if (s.temperatureC === undefined) w.push('No temperature given: the analysis assumes 25 °C.');
  return w;
}

/** Form text → number: empty is "not given", anything else must parse (NaN reaches zod and gets its message). */
export function numberOrUndefined(text: string): number | undefined {
  const t = text.trim().replace(',', '.');
  if (t === '') return undefined;
  return /^-?\d*\.?\d+(e-?\d+)?$/i.test(t) ? Number(t) : Number.NaN;
}

/** Shared messages name the document path ("sample.massG must…"); on the form the field already says what. */
export function fieldMessage(message: string): string {
  return message.replace(/^[A-Za-z.]+ (must|is) /, (_m, verb: string) => `${verb[0].toUpperCase()}${verb.slice(1)} `);
}

export function issuesByField(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const i of error.issues) {
    const key = i.path.join('.');
    out[key] ??= fieldMessage(i.message);
  }
  return out;
}
