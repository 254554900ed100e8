import type { z } from 'zod';
import { InputError, parseWith } from '../schemas/input-error';

/** Bad calibration input: `issues` lists each problem as "path: message" so a form or the CLI can show all of them. */
export class CalibrationInputError extends InputError {
  override name = 'CalibrationInputError';
}

/** Parse with a zod schema; on failure throw one CalibrationInputError naming every issue and where it is. */
export const parseInput = <S extends z.ZodType>(schema: S, input: unknown): z.output<S> => parseWith(schema, input, CalibrationInputError);
