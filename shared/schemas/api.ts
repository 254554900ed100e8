import { z } from 'zod';

/** The one error shape every API failure answers with. */
export const apiErrorSchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.unknown().optional(),
  }),
});
export type ApiError = z.infer<typeof apiErrorSchema>;

export const healthSchema = z.object({
  status: z.literal('ok'),
  name: z.literal('halfmark'),
  version: z.string(),
  database: z.enum(['pglite', 'postgres']),
  demo: z.boolean(),
});
export type Health = z.infer<typeof healthSchema>;
