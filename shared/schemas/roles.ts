import { z } from 'zod';

/** What a member may do in a lab. Kept in step with db/schema/core.ts roleEnum. */
export const roleSchema = z.enum(['analyst', 'manager', 'viewer']);
export type Role = z.infer<typeof roleSchema>;
