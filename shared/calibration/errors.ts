import type { z } from 'zod';

/** Bad calibration input: `issues` lists each problem as "path: message" so a form or the CLI can show all of them. */
export class CalibrationInputError extends Error {
  readonly issues: string[];
  constructor(issues: string[]) {
    super(issues.join('; '));
    this.name = 'CalibrationInputError';
    this.issues = issues;
  }
}

/** Parse with a zod schema; on failure throw one CalibrationInputError naming every issue and where it is. */
export function parseInput<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const r = schema.safeParse(input);
  if (r.success) return r.data;
  throw new CalibrationInputError(
    r.error.issues.map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message)),
  );
}
