import { checkRepeatability, gravimetricDripRate } from '../../../shared/calibration';
import { parseInput } from '../../../shared/calibration/errors';
import { dripRateRequestSchema } from '../../../shared/schemas/calibration';

/** `drip-rate FILE.json`: a gravimetric delivery, an array of them, or `{deliveries, maxRelSdPct?}`
 * → `{rateMlPerS, uRateMlPerS, volumeMl, n, sdRateMlPerS?, replicates, ..., acceptance?}`. */
export const dripRate = (input: unknown) => {
  const req = parseInput(dripRateRequestSchema, input);
  const isBatch = !Array.isArray(req) && 'deliveries' in req;
  const result = gravimetricDripRate(isBatch ? req.deliveries : req);
  if (isBatch && req.maxRelSdPct !== undefined) {
    return { ...result, acceptance: checkRepeatability(result, { maxRelSdPct: req.maxRelSdPct }) };
  }
  return result;
};
