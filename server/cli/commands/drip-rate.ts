// `cli drip-rate FILE.json`: gravimetric drip-rate calibration (shared/calibration/gravimetric.ts).
import { checkRepeatability, gravimetricDripRate } from '../../../shared/calibration';
import { parseInput } from '../../../shared/calibration/errors';
import { dripRateRequestSchema } from '../../../shared/schemas/calibration';

export async function run(input: unknown): Promise<unknown> {
  const req = parseInput(dripRateRequestSchema, input);
  const isBatch = !Array.isArray(req) && 'deliveries' in req;
  const result = gravimetricDripRate(isBatch ? req.deliveries : req);
  if (isBatch && req.maxRelSdPct !== undefined) {
    return { ...result, acceptance: checkRepeatability(result, { maxRelSdPct: req.maxRelSdPct }) };
  }
  return result;
}
