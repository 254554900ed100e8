import fc from 'fast-check';
import { fromSchema, wild, type JsonSchema } from './body-arbitrary';

/**
 * One change to a known-valid request: a leaf replaced (by a value shaped by the schema, a value near the valid one,
 * or a wild one), a key dropped, or an extra key added. Requests near the valid one pass validation more often than
 * schema-derived ones, so the handler's own checks and the science behind them get the odd values.
 */
export type Path = (string | number)[];
export type Mutation =
  | { op: 'as-is' }
  | { op: 'replace'; path: Path; value: unknown; how: 'shaped' | 'near' | 'wild' }
  | { op: 'drop'; path: Path }
  | { op: 'add'; path: Path; key: string; value: unknown };

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

interface Places {
  leaves: Path[];
  keys: Path[];
  objects: Path[];
}

/** Every place in a value that a mutation can touch. */
export function places(value: unknown, path: Path = [], out: Places = { leaves: [], keys: [], objects: [] }): Places {
  if (path.length) out.keys.push(path);
  if (Array.isArray(value)) {
    if (!value.length) out.leaves.push(path);
    value.forEach((v, i) => places(v, [...path, i], out));
  } else if (isObject(value)) {
    out.objects.push(path);
    const keys = Object.keys(value);
    if (!keys.length && path.length) out.leaves.push(path);
    for (const k of keys) places(value[k], [...path, k], out);
  } else if (path.length) {
    out.leaves.push(path);
  }
  return out;
}

export function valueAt(value: unknown, path: Path): unknown {
  let v = value;
  for (const k of path) v = (v as Record<string | number, unknown> | undefined)?.[k];
  return v;
}

/** The alternative of a union the example takes (its const and single-value enum properties match), else the first. */
function branchOf(s: JsonSchema, example: unknown): JsonSchema {
  const alts = [...(s.anyOf ?? []), ...(s.oneOf ?? [])];
  if (!alts.length) return s;
  const matches = (alt: JsonSchema) =>
    Object.entries(alt.properties ?? {}).every(([k, p]) => {
      const fixed = p.const !== undefined ? p.const : p.enum?.length === 1 ? p.enum[0] : undefined;
      return fixed === undefined || (isObject(example) && example[k] === fixed);
    });
  return branchOf(alts.find((a) => (a.properties || a.items) && matches(a)) ?? alts[0], example);
}

/** The part of a JSON Schema that describes the value at `path` of `example`; undefined when the schema says nothing. */
export function schemaAt(root: JsonSchema | undefined, example: unknown, path: Path): JsonSchema | undefined {
  let s = root;
  let v = example;
  for (const k of path) {
    if (!s) return undefined;
    s = branchOf(s, v);
    s = typeof k === 'number' ? (s.prefixItems?.[k] ?? s.items) : s.properties?.[k];
    v = (v as Record<string | number, unknown> | undefined)?.[k];
  }
  return s;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const NUMERIC = /^-?\d+(\.\d+)?$/;

/** Values a client could plausibly send instead: the same kind, off by a little or a lot, or at an edge. */
export function near(v: unknown): fc.Arbitrary<unknown> {
  if (typeof v === 'number') {
    const m = Math.abs(v) || 1;
    return fc.oneof(
      fc.constantFrom(0, -v, v / 2, v * 2, v * 10, v * 1e3, v * 1e-3, v + 1, v - 1, v * (1 + 1e-12), Math.round(v) + 0.5, 1e-300, 1e300, -1e300, Number.MAX_SAFE_INTEGER),
      fc.double({ min: -10 * m, max: 10 * m, noNaN: true }),
      fc.integer({ min: -1000, max: 1000 }),
    );
  }
  if (typeof v === 'string') {
    if (UUID.test(v)) return fc.oneof(fc.uuid(), fc.constantFrom(v.toUpperCase(), v.slice(0, -1), `${v}0`, '00000000-0000-0000-0000-000000000000'));
    if (NUMERIC.test(v)) return near(Number(v)).map((n) => (typeof n === 'number' ? String(n) : n));
    if (/^\d{4}-\d{2}-\d{2}/.test(v)) {
      // A day or a date and time: other dates in the same format, edge and impossible ones, other formats.
      const time = v.slice(10);
      const sameFormat = (d: Date) => (time ? d.toISOString() : d.toISOString().slice(0, 10));
      return fc.oneof(
        fc.date({ min: new Date('1900-01-01'), max: new Date('2200-01-01'), noInvalidDate: true }).map(sameFormat),
        fc.constantFrom(...['0000-01-01', '0001-01-01', '9999-12-31', '2023-02-29', '2024-13-01', '9999-99-99'].map((d) => d + time)),
        fc.constantFrom(v.slice(0, 10), v.replace('T', ' '), `${v.slice(0, 19)}+14:00`, `${v}Z`),
      );
    }
    return fc.oneof(
      fc.constantFrom('', ' ', v.toUpperCase(), ` ${v} `, v.slice(0, -1), v + v, v.repeat(200), `${v}\u0000`, `\u202e${v}`, `=${v}`, `${v}'; --`),
      fc.string({ maxLength: 40 }),
    );
  }
  if (typeof v === 'boolean') return fc.constantFrom(!v, String(v), v ? 1 : 0, null);
  if (Array.isArray(v)) return fc.constantFrom([], [...v, ...v], v.slice(1), v.slice(0, 1), [v]);
  return fc.constantFrom(null, 0, '', {}, []);
}

/** The mutations of one example (its shape is what every fresh copy of it has). */
export function mutationArbitrary(example: unknown, schema: JsonSchema | undefined, fixed: Path[] = []): fc.Arbitrary<Mutation> {
  const where = places(example);
  // Places that are not the client's to change (the holder of body and query; a query as a whole, which is an object).
  const free = (p: Path) => !fixed.some((f) => f.length === p.length && f.every((k, i) => k === p[i]));
  const leaves = where.leaves.filter(free);
  const keys = where.keys.filter(free);
  const objects = where.objects.filter(free);
  const options: fc.WeightedArbitrary<Mutation>[] = [];
  if (leaves.length) {
    options.push({
      weight: 4,
      arbitrary: fc.constantFrom(...leaves).chain((path) => {
        const current = valueAt(example, path);
        const shaped = schemaAt(schema, example, path);
        return fc.oneof(
          (shaped ? fromSchema(shaped) : near(current)).map((value) => ({ op: 'replace' as const, path, value, how: 'shaped' as const })),
          near(current).map((value) => ({ op: 'replace' as const, path, value, how: 'near' as const })),
          wild.map((value) => ({ op: 'replace' as const, path, value, how: 'wild' as const })),
        );
      }),
    });
  }
  if (keys.length) options.push({ weight: 1, arbitrary: fc.constantFrom(...keys).map((path) => ({ op: 'drop' as const, path })) });
  if (objects.length) {
    const key = fc.oneof(fc.string({ maxLength: 12 }), fc.constantFrom('__proto__', 'constructor', 'id', 'labId', 'result', 'rateMlPerS', 'status', 'isDemo'));
    options.push({
      weight: 1,
      arbitrary: fc.tuple(fc.constantFrom(...objects), key, wild).map(([path, k, value]) => ({ op: 'add' as const, path, key: k, value })),
    });
  }
  return options.length ? fc.oneof(...options) : fc.constant({ op: 'as-is' });
}

/** A copy of `example` with the mutation applied (keys such as "__proto__" become own properties, as JSON has them). */
export function applyMutation<T>(example: T, m: Mutation): T {
  if (m.op === 'as-is') return example;
  const root = structuredClone(example) as unknown;
  const holder = { root } as Record<string, unknown>;
  const path: Path = ['root', ...m.path];
  const parent = valueAt(holder, m.op === 'add' ? path : path.slice(0, -1)) as Record<string | number, unknown> | unknown[] | undefined;
  if (parent === null || typeof parent !== 'object') return holder.root as T;
  const last = path[path.length - 1];
  if (m.op === 'add') Object.defineProperty(parent, m.key, { value: m.value, enumerable: true, writable: true, configurable: true });
  else if (m.op === 'drop' && Array.isArray(parent)) parent.splice(Number(last), 1);
  else if (m.op === 'drop') delete (parent as Record<string, unknown>)[last];
  else Object.defineProperty(parent, last, { value: m.value, enumerable: true, writable: true, configurable: true });
  return holder.root as T;
}

const shown = (v: unknown) => (JSON.stringify(v) ?? String(v)).slice(0, 80);
export const describeMutation = (m: Mutation) =>
  m.op === 'as-is'
    ? 'as is'
    : m.op === 'drop'
      ? `drop ${m.path.join('.')}`
      : m.op === 'add'
        ? `add ${[...m.path, m.key].join('.')} = ${shown(m.value)}`
        : `${m.how} ${m.path.join('.')} = ${shown(m.value)}`;
