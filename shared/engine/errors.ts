import type { z } from 'zod';
import { InputError, parseWith } from '../schemas/input-error';

/** Bad engine input: `issues` lists each problem as "path: message"; `zodError` keeps the validator's own report. */
export class EngineInputError extends InputError {
  override name = 'EngineInputError';
}

export const parseOrThrow = <S extends z.ZodType>(schema: S, input: unknown): z.output<S> => parseWith(schema, input, EngineInputError);
