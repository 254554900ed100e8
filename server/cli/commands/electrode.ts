import { calibrateElectrode } from '../../../shared/calibration';
import { parseInput } from '../../../shared/calibration/errors';
import { electrodeCalibrationInputSchema } from '../../../shared/schemas/calibration';

/** `electrode FILE.json`: `{temperatureC, points: [{pH | buffer, mV}], limits?}` → slope (% of Nernst), offset
 * (mV at pH 7), r², residuals and acceptance. */
export const electrode = (input: unknown) => calibrateElectrode(parseInput(electrodeCalibrationInputSchema, input));
