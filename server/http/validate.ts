import type { z } from 'zod';

/** Parses input with a shared zod schema; a failure becomes a 400 in the API's error shape (see errors.ts). */
export function parse<S extends z.ZodType>(schema: S, input: unknown): z.infer<S> {
  return schema.parse(input);
}
