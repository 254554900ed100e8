// `cli electrode FILE.json`: {temperatureC, points: [{pH | buffer, mV}], limits?} → slope %, offset at pH 7, acceptance.
import { calibrateElectrode } from '../../../shared/calibration';
import { parseInput } from '../../../shared/calibration/errors';
import { electrodeCalibrationInputSchema } from '../../../shared/schemas/calibration';

export async function run(input: unknown): Promise<unknown> {
  return calibrateElectrode(parseInput(electrodeCalibrationInputSchema, input));
}
