import type { z } from 'zod';

/** Bad input to a pure computation: `issues` lists each problem as "path: message" so a form or the CLI can show all. */
export class InputError extends Error {
  readonly issues: string[];
  readonly zodError: z.ZodError | undefined;
  constructor(issues: string[], zodError?: z.ZodError) {
    super(issues.join('; '));
    this.issues = issues;
    this.zodError = zodError;
  }
}

/** Parses with a zod schema; on failure throws one `Err` naming every issue and where it is. */
export function parseWith<S extends z.ZodType>(schema: S, input: unknown, Err: new (issues: string[], zodError?: z.ZodError) => InputError): z.output<S> {
  const r = schema.safeParse(input);
  if (r.success) return r.data;
  throw new Err(
    r.error.issues.map((i) => (i.path.length ? `${i.path.join('.')}: ${i.message}` : i.message)),
    r.error,
  );
}
