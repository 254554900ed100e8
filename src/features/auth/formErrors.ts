import type { z } from 'zod';
import { ApiRequestError } from '../../api/errors';

export type FieldErrors = Record<string, string>;

/** Field messages from a failed client-side parse: first message per field. */
export function zodFieldErrors(err: z.ZodError): FieldErrors {
  const out: FieldErrors = {};
  for (const i of err.issues) {
    const k = i.path.join('.');
    out[k] ??= i.message;
  }
  return out;
}

/** Splits a server failure into per-field messages and one message for the form. */
export function serverErrors(err: unknown): { fields: FieldErrors; form: string | null } {
  if (!(err instanceof ApiRequestError)) return { fields: {}, form: 'Something went wrong. Try again.' };
  const fields: FieldErrors = {};
  for (const d of err.details ?? []) if (d.path) fields[d.path] ??= d.message;
  return { fields, form: Object.keys(fields).length ? null : err.message };
}
