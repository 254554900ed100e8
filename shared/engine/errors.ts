import type { z } from 'zod';

/** Bad engine input: `issues` lists each problem as "path: message"; `zodError` keeps the validator's own report. */
export class EngineInputError extends Error {
  readonly issues: string[];
  readonly zodError: z.ZodError | undefined;
  constructor(issues: string[], zodError?: z.ZodError) {
    super(issues.join('; '));
    this.name = 'EngineInputError';
    this.issues = issues;
    this.zodError = zodError;
  }
}

export function parseOrThrow<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const r = schema.safeParse(input);
  if (r.success) return r.data;
  throw new EngineInputError(
    r.error.issues.map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message)),
    r.error,
  );
}
