import { z } from 'zod';

/**
 * The sync protocol between a device's local outbox and the lab server (issue 6). See server/services/sync.ts for
 * the rules the server applies; these schemas are the wire format both sides validate.
 *
 * Every change carries the client-generated id of its record (the idempotency key), the device's sequence number
 * (strictly increasing per device, gaps allowed) and the device's wall-clock time of recording (stored, never used
 * to order or resolve anything).
 */

const uuid = z.uuid();
/**
 * Milliseconds since the epoch on the device's clock (may be days off). At most the end of the year 9999: a Date
 * after it is written with a six-digit year (ECMA-262, Date Time String Format), which PostgreSQL does not read.
 */
const DEVICE_MS_MAX = Date.UTC(9999, 11, 31, 23, 59, 59, 999);
const deviceMs = z.number().int().nonnegative().max(DEVICE_MS_MAX);
const finite = z.number().finite();
/** pH meters in this trade read about −2…16; anything beyond is a typing error. Common practice, not a standard. */
const PH_MIN = -2;
const PH_MAX = 16;
const pH = finite.min(PH_MIN).max(PH_MAX);
/** mV of a glass electrode: ±2000 mV covers every meter range we know (common practice). */
const MV_LIMIT = 2000;
const mV = finite.min(-MV_LIMIT).max(MV_LIMIT);
const RUN_TIME_MAX_S = 7 * 24 * 3600;
const runTimeS = finite.nonnegative().max(RUN_TIME_MAX_S);

/** Statuses a device may set; review outcomes (approved, returned) are the server's and a reviewer's business. */
export const deviceRunStatusSchema = z.enum(['ready', 'recording', 'running', 'paused', 'finished', 'submitted']);

export const runPayloadSchema = z.object({
  labId: uuid,
  sampleName: z.string().trim().min(1).max(200),
  setup: z.record(z.string(), z.unknown()).default({}),
  notes: z.string().max(20_000).default(''),
  status: deviceRunStatusSchema.default('ready'),
  isDemo: z.boolean().default(false),
});

export const readingPayloadSchema = z
  .object({
    runId: uuid,
    timeS: runTimeS,
    pH: pH.nullable().default(null),
    mV: mV.nullable().default(null),
  })
  .refine((r) => r.pH !== null || r.mV !== null, { message: 'A reading needs a pH or an mV value.' });

export const checkpointPayloadSchema = z.object({
  runId: uuid,
  timeS: runTimeS,
  buretteMl: finite.min(0).max(1000),
});

/** A new record that corrects (values given) or withdraws (`withdraw: true`) a reading or checkpoint. */
export const correctionPayloadSchema = z
  .object({
    of: z.enum(['reading', 'checkpoint']),
    runId: uuid,
    replacesId: uuid,
    reason: z.string().trim().min(1, 'A correction needs a reason.').max(2000),
    withdraw: z.boolean().default(false),
    timeS: runTimeS.optional(),
    pH: pH.nullable().optional(),
    mV: mV.nullable().optional(),
    buretteMl: finite.min(0).max(1000).nullable().optional(),
  })
  .refine(
    (c) =>
      c.withdraw ||
      (c.of === 'reading' ? c.pH != null || c.mV != null : c.buretteMl != null),
    { message: 'A correction gives the new value, or withdraws the record.' },
  );

export const runEventPayloadSchema = z.object({
  runId: uuid,
  kind: z.string().trim().min(1).max(40),
  timeS: runTimeS,
  detail: z.record(z.string(), z.unknown()).nullable().default(null),
});

export const metaFieldSchema = z.enum(['notes', 'sampleName', 'status']);
export type MetaField = z.infer<typeof metaFieldSchema>;

/** An edit of a run's editable metadata, made on top of the server version the device last saw. */
export const runMetaEditPayloadSchema = z
  .object({
    runId: uuid,
    field: metaFieldSchema,
    value: z.string().max(20_000),
    /** The run version the device had when the edit was made; null if the run never reached the server before. */
    baseVersion: z.number().int().positive().nullable(),
  })
  .superRefine((e, ctx) => {
    if (e.field === 'status' && !deviceRunStatusSchema.safeParse(e.value).success) {
      ctx.addIssue({ code: 'custom', path: ['value'], message: `A device cannot set the status "${e.value}".` });
    }
    if (e.field === 'sampleName' && !e.value.trim()) {
      ctx.addIssue({ code: 'custom', path: ['value'], message: 'The sample name cannot be empty.' });
    }
  });

export const submissionPayloadSchema = z.object({
  runId: uuid,
  note: z.string().max(2000).default(''),
});

export const entityKindSchema = z.enum(['run', 'reading', 'checkpoint', 'correction', 'run_event', 'run_meta_edit', 'submission']);
export type EntityKind = z.infer<typeof entityKindSchema>;

/** True when a string (or any key or string inside) holds U+0000, which PostgreSQL cannot store in text or jsonb. */
export function holdsNul(v: unknown): boolean {
  if (typeof v === 'string') return v.includes('\u0000');
  // Loops, not entries()/some(): every pushed payload passes here, and the pairs were garbage to collect.
  if (Array.isArray(v)) {
    for (let i = 0; i < v.length; i++) if (holdsNul(v[i])) return true;
    return false;
  }
  if (v && typeof v === 'object') {
    const o = v as Record<string, unknown>;
    for (const k in o) if (Object.hasOwn(o, k) && (k.includes('\u0000') || holdsNul(o[k]))) return true;
  }
  return false;
}
/** A payload holding U+0000 is rejected like any bad payload: that change only, not the whole batch. */
const storable = <T extends z.ZodType>(schema: T) => schema.refine((p) => !holdsNul(p), { message: 'Text cannot contain the NUL character (U+0000).' });

export const payloadSchemas = {
  run: storable(runPayloadSchema),
  reading: storable(readingPayloadSchema),
  checkpoint: storable(checkpointPayloadSchema),
  correction: storable(correctionPayloadSchema),
  run_event: storable(runEventPayloadSchema),
  run_meta_edit: storable(runMetaEditPayloadSchema),
  submission: storable(submissionPayloadSchema),
} as const;

/**
 * The quick paths below take the common case of a push (a new reading) without zod's work and garbage per value
 * (a 10,000-reading push ran every schema node per change, on the device and on the server). Each accepts only what
 * its schema accepts and returns what the schema's parse would (defaults applied, unknown keys left out, a fresh
 * object); anything else, valid or not, returns undefined and goes to the schema, which decides and words the error.
 * shared/schemas/sync-quick.test.ts checks them against the schemas on generated input. Keep them in step with the
 * schemas: a change of a schema above without its quick path fails that test.
 */
const UUID_PATTERN = uuid.def.pattern!;
const isUuid = (v: unknown): v is string => typeof v === 'string' && UUID_PATTERN.test(v);
const isFiniteIn = (v: unknown, min: number, max: number): v is number => typeof v === 'number' && Number.isFinite(v) && v >= min && v <= max;
const isIntIn = (v: unknown, min: number, max: number): v is number => Number.isSafeInteger(v) && (v as number) >= min && (v as number) <= max;
const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/**
 * True when readingPayloadSchema takes these values of a reading with a valid run id as they are (no default to
 * apply): a time in range, a pH or an mV in range or null, not both null.
 */
export function readingValuesOk(timeS: unknown, pH: unknown, mV: unknown): boolean {
  if (!isFiniteIn(timeS, 0, RUN_TIME_MAX_S)) return false;
  if (pH !== null && !isFiniteIn(pH, PH_MIN, PH_MAX)) return false;
  if (mV !== null && !isFiniteIn(mV, -MV_LIMIT, MV_LIMIT)) return false;
  return pH !== null || mV !== null;
}

/** readingPayloadSchema (with its NUL check: a uuid and numbers hold none) on a plain new reading. */
export function quickReadingPayload(v: unknown): z.infer<typeof readingPayloadSchema> | undefined {
  if (!isObject(v)) return undefined;
  const { runId, timeS } = v;
  const pH = v.pH === undefined ? null : v.pH;
  const mV = v.mV === undefined ? null : v.mV;
  if (!isUuid(runId) || !readingValuesOk(timeS, pH, mV)) return undefined;
  return { runId, timeS: timeS as number, pH: pH as number | null, mV: mV as number | null };
}

/** A change's payload parsed by the schema of its kind (a reading by its quick path when it can). */
export function parsePayload<K extends EntityKind>(kind: K, payload: unknown): z.ZodSafeParseResult<z.infer<(typeof payloadSchemas)[K]>> {
  const quick = kind === 'reading' ? quickReadingPayload(payload) : undefined;
  if (quick) return { success: true, data: quick as z.infer<(typeof payloadSchemas)[K]> };
  return payloadSchemas[kind].safeParse(payload) as z.ZodSafeParseResult<z.infer<(typeof payloadSchemas)[K]>>;
}

/**
 * One change as sent. The payload is validated per kind on the server, record by record, so one bad change is
 * answered "rejected" and the rest of the batch still goes in.
 */
export const changeSchema = z.object({
  id: uuid,
  kind: entityKindSchema,
  seq: z.number().int().positive(),
  recordedAt: deviceMs,
  payload: z.unknown(),
});
export type Change = z.infer<typeof changeSchema>;

const ENTITY_KINDS: ReadonlySet<unknown> = new Set(entityKindSchema.options);

/** True when quickChange takes this change: a check with nothing to collect, for a device checking what it sends. */
export function isQuickChange(v: unknown): boolean {
  if (!isObject(v)) return false;
  // An absent payload is left to the schema.
  return isUuid(v.id) && ENTITY_KINDS.has(v.kind) && isIntIn(v.seq, 1, Number.MAX_SAFE_INTEGER) && isIntIn(v.recordedAt, 0, DEVICE_MS_MAX) && v.payload !== undefined;
}

/** changeSchema on a change of any kind (its payload is judged later, by kind). */
export function quickChange(v: unknown): Change | undefined {
  if (!isQuickChange(v)) return undefined;
  const c = v as Change;
  return { id: c.id, kind: c.kind, seq: c.seq, recordedAt: c.recordedAt, payload: c.payload };
}

/**
 * Changes in one push at most. For new readings in blocks (about 80 bytes each) it ends a push: 16,000 are ~1.3 MB
 * (10,000 took ~0.4 s on PGlite in the sync bench, as one transaction). Sent one by one (to a server from before
 * blocks), readings are ~200 bytes and the push's body budget (PUSH_BYTES_BUDGET, each counted at its bound
 * READING_BYTES, src/sync/engine.ts) ends a push at ~12,900. Fewer, larger pushes spare each push's fixed work (lock, run lookup, device row, commit;
 * HTTP, the session check, the request and its answer): 2,000 → 5,000 took the sync bench's median 1.00 → 0.78 s (6
 * alternating runs each, loaded machine, 2026-12-02); a run and 10,000 readings in one push instead of two, 476 →
 * 434 ms (one bench run each, idle machine, 2026-12-02). A cached client sending fewer is still taken; a device
 * facing an older server that refuses more falls back to MAX_BATCH_BEFORE, or halves its pushes on a 413.
 */
export const MAX_BATCH = 16_000;
/** What servers took before MAX_BATCH was raised: a device refused a longer push (400) goes again with this many. */
export const MAX_BATCH_BEFORE = 2000;

/** The largest JSON body the API takes (bytes; server/app.ts), except a push's and an import's. */
export const API_BODY_LIMIT_BYTES = 2 * 1024 * 1024;
/**
 * The largest body of a push (bytes; server/app.ts). A long offline run goes in few pushes; each is one transaction,
 * which other requests wait for on PGlite (10,000 readings: ~0.4 s).
 */
export const PUSH_BODY_LIMIT_BYTES = 4 * 1024 * 1024;
/**
 * A push's changes as UTF-8 JSON at most (bytes): under the push's body limit with room for the envelope. Long notes
 * or correction reasons reach it before MAX_BATCH does (5,000 reasons of 2,000 characters are ~10 MB).
 */
export const PUSH_BYTES_BUDGET = PUSH_BODY_LIMIT_BYTES - 64 * 1024;

/**
 * New readings of one run written column by column: element i of each array is one reading (its id, sequence number,
 * device time and payload values). A long offline run is almost all new readings, and in this form each costs about
 * 80 bytes of JSON instead of 200, with no object per reading to write or read on either side. Each reading is still a
 * change of its own: the same envelope rules (a bad id, sequence number or time refuses the request), its payload
 * judged alone (one bad value is rejected, the rest go in), and an answer of its own. `blockReading` gives the change
 * a reading of a block stands for.
 */
export const readingBlockSchema = z
  .object({
    runId: uuid,
    ids: z.array(uuid).min(1),
    seqs: z.array(z.number().int().positive()),
    recordedAt: z.array(deviceMs),
    // Payload values: judged per reading with the payload (readingPayloadSchema), not here.
    timeS: z.array(z.unknown()),
    pH: z.array(z.unknown()),
    mV: z.array(z.unknown()),
  })
  .refine((b) => [b.seqs, b.recordedAt, b.timeS, b.pH, b.mV].every((a) => a.length === b.ids.length), { message: 'Every column of a reading block has one value per reading.' });
export type ReadingBlock = z.infer<typeof readingBlockSchema>;

/** The change reading i of a block stands for (the same as sent on its own). */
export function blockReading(b: ReadingBlock, i: number): Change {
  return { id: b.ids[i], kind: 'reading', seq: b.seqs[i], recordedAt: b.recordedAt[i], payload: { runId: b.runId, timeS: b.timeS[i], pH: b.pH[i], mV: b.mV[i] } };
}

/** Every change of a push: its `changes`, then the readings of its blocks in order (the order answers are listed in). */
export function requestChanges(req: Pick<PushRequest, 'changes' | 'readings'>): Change[] {
  if (!req.readings?.length) return req.changes;
  return [...req.changes, ...req.readings.flatMap((b) => b.ids.map((_, i) => blockReading(b, i)))];
}

/** Changes in a push, its own and its blocks' readings. */
export const changeCount = (req: Pick<PushRequest, 'changes' | 'readings'>): number => req.changes.length + (req.readings?.reduce((n, b) => n + b.ids.length, 0) ?? 0);

/**
 * Null when the numbering of a push is valid: sequence numbers increasing within `changes` and within each block, none
 * used twice, and no record id used twice (two changes under one id in one push would leave one of them unstored).
 */
function batchProblem(changes: readonly { id: string; seq: number }[], blocks: readonly { ids: readonly string[]; seqs: readonly number[] }[]): { path: (string | number)[]; message: string } | null {
  for (let i = 1; i < changes.length; i++) {
    if (changes[i].seq <= changes[i - 1].seq) return { path: ['changes', i, 'seq'], message: 'Sequence numbers must increase within a batch.' };
  }
  for (let b = 0; b < blocks.length; b++) {
    const s = blocks[b].seqs;
    for (let i = 1; i < s.length; i++) if (s[i] <= s[i - 1]) return { path: ['readings', b, 'seqs', i], message: 'Sequence numbers must increase within a batch.' };
  }
  const ids = new Set<string>();
  for (let i = 0; i < changes.length; i++) {
    if (ids.has(changes[i].id)) return { path: ['changes', i, 'id'], message: `The id ${changes[i].id} is used twice in the batch.` };
    ids.add(changes[i].id);
  }
  for (let b = 0; b < blocks.length; b++) {
    for (const id of blocks[b].ids) {
      if (ids.has(id)) return { path: ['readings', b, 'ids'], message: `The id ${id} is used twice in the batch.` };
      ids.add(id);
    }
  }
  if (!blocks.length) return null;
  // Sequence numbers across lists: each once.
  const seen = new Set<number>();
  for (const c of changes) seen.add(c.seq);
  for (let b = 0; b < blocks.length; b++) {
    for (const q of blocks[b].seqs) {
      if (seen.has(q)) return { path: ['readings', b, 'seqs'], message: `Sequence number ${q} is used twice in the batch.` };
      seen.add(q);
    }
  }
  return null;
}

export const pushRequestSchema = z
  .object({
    deviceId: uuid,
    /** Device wall clock when the request was sent: the server estimates the device's clock offset from it. */
    sentAt: deviceMs,
    changes: z.array(changeSchema).max(MAX_BATCH),
    /** New readings in blocks of one run each (readingBlockSchema); counted with `changes` against MAX_BATCH. */
    readings: z.array(readingBlockSchema).optional(),
    /**
     * How the answer lists the changes: 'all' (the default) one result per change; 'exceptions' only the changes not
     * simply accepted (any other outcome, or a metadata resolution), with the number of the others. A long offline
     * run is mostly plain acceptances, and a result for each cost both sides more than the rest of the answer.
     */
    answer: z.enum(['all', 'exceptions']).optional(),
  })
  .superRefine((b, ctx) => {
    const n = changeCount(b);
    if (n < 1) ctx.addIssue({ code: 'custom', path: ['changes'], message: 'A push carries at least one change.' });
    if (n > MAX_BATCH) ctx.addIssue({ code: 'custom', path: ['changes'], message: `A push carries at most ${MAX_BATCH} changes.` });
    const p = batchProblem(b.changes, b.readings ?? []);
    if (p) ctx.addIssue({ code: 'custom', ...p });
  });
export type PushRequest = z.infer<typeof pushRequestSchema>;

/** readingBlockSchema on a block whose envelope columns are all valid (values are judged later, per reading). */
function quickBlock(v: unknown): ReadingBlock | undefined {
  if (!isObject(v)) return undefined;
  const { runId, ids, seqs, recordedAt, timeS, pH, mV } = v;
  if (!isUuid(runId) || !Array.isArray(ids) || !ids.length) return undefined;
  const n = ids.length;
  if (!Array.isArray(seqs) || !Array.isArray(recordedAt) || !Array.isArray(timeS) || !Array.isArray(pH) || !Array.isArray(mV)) return undefined;
  if (seqs.length !== n || recordedAt.length !== n || timeS.length !== n || pH.length !== n || mV.length !== n) return undefined;
  for (let i = 0; i < n; i++) {
    if (!isUuid(ids[i]) || !isIntIn(seqs[i], 1, Number.MAX_SAFE_INTEGER) || !isIntIn(recordedAt[i], 0, DEVICE_MS_MAX)) return undefined;
    // A hole in an array (not from JSON) is left to the schema, which reads it as undefined.
    if (!(i in timeS) || !(i in pH) || !(i in mV)) return undefined;
  }
  return { runId, ids, seqs, recordedAt, timeS, pH, mV };
}

/** pushRequestSchema.parse (throws its ZodError on a bad request), through the quick paths when every change takes them. */
export function parsePushRequest(v: unknown): PushRequest {
  quick: if (isObject(v)) {
    const { deviceId, sentAt, changes, readings, answer } = v;
    if (!isUuid(deviceId) || !isIntIn(sentAt, 0, DEVICE_MS_MAX) || !(answer === undefined || answer === 'all' || answer === 'exceptions')) break quick;
    if (!Array.isArray(changes) || changes.length > MAX_BATCH) break quick;
    if (!(readings === undefined || Array.isArray(readings))) break quick;
    const out = new Array<Change>(changes.length);
    for (let i = 0; i < changes.length; i++) {
      const c = quickChange(changes[i]);
      if (!c) break quick;
      out[i] = c;
    }
    let blocks: ReadingBlock[] | undefined;
    if (readings) {
      blocks = new Array<ReadingBlock>(readings.length);
      for (let i = 0; i < readings.length; i++) {
        const b = quickBlock(readings[i]);
        if (!b) break quick;
        blocks[i] = b;
      }
    }
    const req: PushRequest = { deviceId, sentAt, changes: out };
    // As zod does: a key given as undefined stays, as undefined.
    if ('readings' in v) req.readings = blocks;
    if ('answer' in v) req.answer = answer;
    const n = changeCount(req);
    if (n < 1 || n > MAX_BATCH || batchProblem(out, blocks ?? [])) break quick;
    return req;
  }
  return pushRequestSchema.parse(v);
}

/**
 * What became of one change:
 * - accepted: stored now; duplicate: already stored with the identical payload ("already have it");
 * - conflict (409): that id is stored with a different payload, which stays untouched;
 * - rejected (422/403/404): can never be accepted as sent (validation, permission, unknown run); the reason says why;
 * - out_of_order (409): a new record with a sequence number at or below one the server already accepted.
 */
export const outcomeSchema = z.enum(['accepted', 'duplicate', 'conflict', 'rejected', 'out_of_order']);
export type Outcome = z.infer<typeof outcomeSchema>;

export const metaResolutionSchema = z.object({
  field: metaFieldSchema,
  /** Which value the run now holds: this device's edit, or the one that reached the server first. */
  winner: z.enum(['device', 'server']),
  conflict: z.boolean(),
  value: z.string(),
  version: z.number().int(),
});
export type MetaResolution = z.infer<typeof metaResolutionSchema>;

export const changeResultSchema = z.object({
  id: uuid,
  seq: z.number().int(),
  outcome: outcomeSchema,
  status: z.number().int(),
  reason: z.string().optional(),
  meta: metaResolutionSchema.optional(),
});
export type ChangeResult = z.infer<typeof changeResultSchema>;

export const pushResponseSchema = z.object({
  /** In request order: every change, or with `answer: 'exceptions'` only those not simply accepted. */
  results: z.array(changeResultSchema),
  /**
   * With `answer: 'exceptions'`: how many changes of the request were accepted (stored now, no metadata resolution)
   * and are not listed. Results plus this count must cover the request exactly; a device that finds otherwise
   * settles nothing from the answer.
   */
  acceptedUnlisted: z.number().int().nonnegative().optional(),
  /** Highest sequence number of this device the server has taken (committed with the batch). */
  lastSeq: z.number().int(),
  serverTime: z.iso.datetime(),
  /** Device clock minus server clock at receipt, ms (one-way latency included); flagged beyond CLOCK_FLAG_MS. */
  clockOffsetMs: z.number(),
  clockFlagged: z.boolean(),
  /**
   * True from servers that take readings in blocks (`readings` of the request). A device sends blocks freely only
   * after seeing it: a server from before blocks drops them unread (see src/sync/engine.ts).
   */
  readingBlocks: z.boolean().optional(),
});
export type PushResponse = z.infer<typeof pushResponseSchema>;

/** Offsets beyond this are flagged on the run (common practice: well above network latency, well below a shift). */
export const CLOCK_FLAG_MS = 5 * 60_000;

export const pullQuerySchema = z.object({
  cursor: z.coerce.number().int().nonnegative().default(0),
  limit: z.coerce.number().int().min(1).max(5000).default(1000),
});
export type PullQuery = z.infer<typeof pullQuerySchema>;

const iso = z.iso.datetime({ offset: true });

export const pulledRunSchema = z.object({
  id: uuid,
  labId: uuid,
  analystId: uuid,
  sampleName: z.string(),
  status: z.string(),
  setup: z.unknown(),
  notes: z.string(),
  version: z.number().int(),
  isDemo: z.boolean(),
  createdAt: iso,
  updatedAt: iso,
  /** Largest device clock offset seen while this run synced, when it was beyond CLOCK_FLAG_MS. */
  clockOffsetMs: z.number().nullable(),
});
export const pulledReadingSchema = z.object({
  id: uuid,
  runId: uuid,
  labId: uuid,
  kind: z.string(),
  timeS: z.number(),
  pH: z.number().nullable(),
  mV: z.number().nullable(),
  replacesId: uuid.nullable(),
  reason: z.string().nullable(),
  deviceRecordedAt: iso.nullable(),
  receivedAt: iso,
});
export const pulledCheckpointSchema = z.object({
  id: uuid,
  runId: uuid,
  labId: uuid,
  timeS: z.number(),
  buretteMl: z.number().nullable(),
  replacesId: uuid.nullable(),
  reason: z.string().nullable(),
  deviceRecordedAt: iso.nullable(),
  receivedAt: iso,
});
export const pulledRunEventSchema = z.object({
  id: uuid,
  runId: uuid,
  labId: uuid,
  kind: z.string(),
  timeS: z.number(),
  detail: z.unknown(),
  receivedAt: iso,
});
export const pulledMetaEditSchema = z.object({
  id: uuid,
  runId: uuid,
  field: metaFieldSchema,
  value: z.string(),
  previousValue: z.string().nullable(),
  baseVersion: z.number().int().nullable(),
  resultVersion: z.number().int(),
  outcome: z.enum(['applied', 'conflict']),
  userId: uuid,
  receivedAt: iso,
});

const knownChangeSchema = z.discriminatedUnion('entity', [
  z.object({ seq: z.number().int(), entity: z.literal('run'), record: pulledRunSchema }),
  z.object({ seq: z.number().int(), entity: z.literal('reading'), record: pulledReadingSchema }),
  z.object({ seq: z.number().int(), entity: z.literal('checkpoint'), record: pulledCheckpointSchema }),
  z.object({ seq: z.number().int(), entity: z.literal('run_event'), record: pulledRunEventSchema }),
  z.object({ seq: z.number().int(), entity: z.literal('run_meta_edit'), record: pulledMetaEditSchema }),
]);
// Calibrations and titrants join as their areas register loaders (server/services/sync.ts); clients skip kinds they do not know.
export const pulledChangeSchema = z.union([knownChangeSchema, z.object({ seq: z.number().int(), entity: z.string(), record: z.unknown() })]);
export type PulledChange = z.infer<typeof pulledChangeSchema>;

export const pullResponseSchema = z.object({
  changes: z.array(pulledChangeSchema),
  /** Pass back as `cursor` next time; it only grows. */
  cursor: z.number().int(),
  more: z.boolean(),
});
export type PullResponse = z.infer<typeof pullResponseSchema>;

/** Live follow of one run: readings, checkpoints and events after `after` (a pull cursor). */
export const liveQuerySchema = z.object({
  after: z.coerce.number().int().nonnegative().default(0),
});
