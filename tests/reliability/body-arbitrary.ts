import fc from 'fast-check';
import { z } from 'zod';

export type JsonSchema = {
  type?: string | string[];
  properties?: Record<string, JsonSchema>;
  required?: string[];
  items?: JsonSchema;
  prefixItems?: JsonSchema[];
  enum?: unknown[];
  const?: unknown;
  anyOf?: JsonSchema[];
  oneOf?: JsonSchema[];
  allOf?: JsonSchema[];
  minimum?: number;
  maximum?: number;
  minLength?: number;
  maxLength?: number;
  format?: string;
};

/** Values no schema expects: wrong types, extremes, huge strings, deep nesting. */
export const wild: fc.Arbitrary<unknown> = fc.oneof(
  fc.constant(null),
  fc.boolean(),
  fc.integer(),
  fc.double({ noNaN: false }),
  fc.constantFrom(1e308, -1e308, Number.MAX_SAFE_INTEGER + 2, -0, 0, -1, 1e-320),
  fc.string(),
  fc.constantFrom('', ' ', 'null', 'NaN', '-1', '1e999', '__proto__', 'constructor', '<script>', "'; drop table runs; --", '\u0000', '=1+1'),
  fc.string({ minLength: 2000, maxLength: 20000 }),
  fc.array(fc.anything({ maxDepth: 2 }), { maxLength: 6 }),
  fc.object({ maxDepth: 3 }),
  fc.uuid(),
  fc.date({ noInvalidDate: true }).map((d) => d.toISOString()),
);

export function fromSchema(s: JsonSchema | undefined, depth = 0): fc.Arbitrary<unknown> {
  if (!s || depth > 6) return wild;
  const branches: fc.Arbitrary<unknown>[] = [];
  if (s.const !== undefined) branches.push(fc.constant(s.const));
  if (s.enum) branches.push(fc.constantFrom(...s.enum));
  for (const alt of [...(s.anyOf ?? []), ...(s.oneOf ?? []), ...(s.allOf ?? [])]) branches.push(fromSchema(alt, depth + 1));
  const types = Array.isArray(s.type) ? s.type : s.type ? [s.type] : [];
  for (const t of types) {
    if (t === 'object') {
      const props = s.properties ?? {};
      const keys = Object.keys(props);
      const rec: Record<string, fc.Arbitrary<unknown>> = {};
      for (const k of keys) rec[k] = fromSchema(props[k], depth + 1);
      // Usually every required key, sometimes some missing; sometimes extra keys.
      branches.push(fc.record(rec, { requiredKeys: s.required?.filter((k) => keys.includes(k)) ?? [] }));
      branches.push(fc.record(rec, { requiredKeys: [] }));
      branches.push(
        fc.tuple(fc.record(rec, { requiredKeys: [] }), fc.dictionary(fc.string({ maxLength: 12 }), wild, { maxKeys: 3 })).map(([a, b]) => ({ ...b, ...a })),
      );
    } else if (t === 'array') {
      branches.push(fc.array(fromSchema(s.items, depth + 1), { maxLength: depth < 2 ? 40 : 5 }));
    } else if (t === 'string') {
      if (s.format === 'uuid') branches.push(fc.uuid());
      else if (s.format === 'email') branches.push(fc.emailAddress());
      else if (s.format === 'date-time') branches.push(fc.date({ noInvalidDate: true }).map((d) => d.toISOString()));
      branches.push(fc.string({ minLength: s.minLength ?? 0, maxLength: Math.min(s.maxLength ?? 80, 400) }));
    } else if (t === 'number' || t === 'integer') {
      const min = s.minimum ?? -1e6;
      const max = s.maximum ?? 1e6;
      branches.push(t === 'integer' ? fc.integer({ min: Math.ceil(Math.max(min, -(2 ** 31))), max: Math.floor(Math.min(max, 2 ** 31)) }) : fc.double({ min, max, noNaN: true }));
    } else if (t === 'boolean') branches.push(fc.boolean());
    else if (t === 'null') branches.push(fc.constant(null));
  }
  if (!branches.length) return wild;
  return fc.oneof({ weight: 6, arbitrary: fc.oneof(...branches) }, { weight: 1, arbitrary: wild });
}

/** Bodies near the shape the schema wants (so they reach deep into handlers), mixed with wild ones. */
export function bodyArbitrary(schema: z.ZodType | undefined): fc.Arbitrary<unknown> {
  if (!schema) return fc.oneof(wild, fc.object());
  return fromSchema(jsonSchemaOf(schema), 0);
}

/** The JSON Schema of what a zod schema accepts as input; undefined when zod cannot represent it. */
export function jsonSchemaOf(schema: z.ZodType | undefined): JsonSchema | undefined {
  if (!schema) return undefined;
  try {
    return z.toJSONSchema(schema, { unrepresentable: 'any', io: 'input' }) as JsonSchema;
  } catch {
    return undefined;
  }
}
