import { z } from 'zod';

/** Request and response shapes of the team desk (runs table, run report, review, comments, import, attachments). */

export const RUN_STATUSES = ['ready', 'recording', 'running', 'paused', 'finished', 'submitted', 'returned', 'approved'] as const;
export const runStatusSchema = z.enum(RUN_STATUSES);
export type RunStatus = z.infer<typeof runStatusSchema>;

export const RUN_SORTS = ['date', 'sample', 'analyst', 'status', 've', 'pka'] as const;
export const runSortSchema = z.enum(RUN_SORTS);
export type RunSort = z.infer<typeof runSortSchema>;

// A real calendar day (not 2024-02-30 or 9999-99-99), from the year 0001 on: PostgreSQL has no year 0000.
const isoDay = z.iso.date('a date as YYYY-MM-DD').refine((s) => s >= '0001-01-01', 'a date from the year 0001 on');

export const runListQuerySchema = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  sort: runSortSchema.default('date'),
  dir: z.enum(['asc', 'desc']).default('desc'),
  /** Free text: sample name, notes or analyst name. */
  q: z.string().trim().max(200).optional(),
  analystId: z.uuid().optional(),
  sample: z.string().trim().max(200).optional(),
  status: runStatusSchema.optional(),
  /** Inclusive, by the run's creation day (UTC). */
  from: isoDay.optional(),
  to: isoDay.optional(),
  titrantLot: z.string().trim().max(200).optional(),
});
export type RunListQuery = z.infer<typeof runListQuerySchema>;
/** What a client sends: every field optional (the server fills the defaults). */
export type RunListQueryInput = Partial<RunListQuery>;

export const runRowSchema = z.object({
  id: z.string(),
  sampleName: z.string(),
  analystId: z.string(),
  analystName: z.string(),
  status: z.string(),
  createdAt: z.string(),
  updatedAt: z.string(),
  equivalenceVolumeMl: z.number().nullable(),
  pKa: z.number().nullable(),
  /** The headline result: molar mass (g/mol) or concentration (mol/L) where the run gives one. */
  molarMassGPerMol: z.number().nullable(),
  concentrationM: z.number().nullable(),
  titrantLot: z.string().nullable(),
  readingCount: z.number(),
  /** When the server last received anything of this run (a reading, checkpoint or event). */
  lastReceivedAt: z.string().nullable(),
  isDemo: z.boolean(),
});
export type RunRow = z.infer<typeof runRowSchema>;

export const runListResponseSchema = z.object({
  rows: z.array(runRowSchema),
  total: z.number(),
  page: z.number(),
  pageSize: z.number(),
  /** Analysts and titrant lots that appear in the lab's runs, for the filter pickers. */
  facets: z.object({
    analysts: z.array(z.object({ id: z.string(), name: z.string() })),
    titrantLots: z.array(z.string()),
  }),
});
export type RunListResponse = z.infer<typeof runListResponseSchema>;

export const commentBodySchema = z.object({ body: z.string().trim().min(1, 'Write something first.').max(5000) });
export type CommentBody = z.infer<typeof commentBodySchema>;

export const submitBodySchema = z.object({ note: z.string().trim().max(2000).default('') });
export const returnBodySchema = z.object({ comment: z.string().trim().min(1, 'Say what needs to change.').max(5000) });
/** The meaning of an approval signature, shown to the approver and stored with it. */
export const APPROVAL_MEANING = 'Reviewed: the readings, calibrations and results of this run are accepted as the lab’s result.';
export const approveBodySchema = z.object({
  password: z.string().min(1, 'Enter your password to sign the approval.').max(1024),
  comment: z.string().trim().max(5000).default(''),
});
export type ApproveBody = z.infer<typeof approveBodySchema>;
export const reopenBodySchema = z.object({ reason: z.string().trim().min(1, 'Give the reason for a new revision.').max(2000) });

export const reviewEventSchema = z.object({
  id: z.string(),
  kind: z.enum(['submit', 'return', 'approve', 'reopen']),
  revision: z.number(),
  actorId: z.string(),
  actorName: z.string(),
  comment: z.string().nullable(),
  meaning: z.string().nullable(),
  at: z.string(),
});
export type ReviewEvent = z.infer<typeof reviewEventSchema>;

export const commentSchema = z.object({
  id: z.string(),
  authorId: z.string(),
  authorName: z.string(),
  body: z.string(),
  createdAt: z.string(),
});
export type Comment = z.infer<typeof commentSchema>;

export const attachmentSchema = z.object({
  id: z.string(),
  runId: z.string().nullable(),
  calibrationId: z.string().nullable(),
  originalName: z.string(),
  mimeType: z.string(),
  sizeBytes: z.number(),
  sha256: z.string(),
  uploadedBy: z.string(),
  uploadedByName: z.string(),
  createdAt: z.string(),
});
export type Attachment = z.infer<typeof attachmentSchema>;

export const ATTACHMENT_MAX_BYTES = 10 * 1024 * 1024;
/** Types accepted, as detected from the content. */
export const ATTACHMENT_TYPES = ['image/png', 'image/jpeg', 'image/webp', 'image/heic', 'application/pdf'] as const;

export interface ReadingRow {
  id: string;
  kind: string;
  timeS: number;
  pH: number | null;
  mV: number | null;
  replacesId: string | null;
  reason: string | null;
  receivedAt: string;
  /** Filled by the server: the correction that replaced or withdrew this reading, if any. */
  supersededBy: string | null;
  /** Volume delivered at this time by the run's delivery map (mL), when the run can be analysed. */
  volumeMl: number | null;
}

export interface CheckpointRow {
  id: string;
  timeS: number;
  /** Null on a record that withdraws a checkpoint. */
  buretteMl: number | null;
  replacesId: string | null;
  reason: string | null;
  supersededBy: string | null;
}

export interface RunEventRow {
  id: string;
  kind: string;
  timeS: number;
  detail: unknown;
  receivedAt: string;
}

export interface HistoryEntry {
  at: string;
  actorName: string | null;
  action: string;
  detail: string;
}

export interface CalibrationUsed {
  kind: 'drip-rate' | 'electrode' | 'titrant' | 'burette';
  label: string;
  /** What the run recorded of it (value and unit as text). */
  value: string;
  /** in force | superseded | expired | withdrawn | manual | unknown */
  state: string;
  id: string | null;
}

export interface RunDetail {
  run: RunRow & { notes: string; version: number; setup: Record<string, unknown>; labId: string };
  revision: { revision: number; lockedAt: string | null; approvedByName: string | null; approvalMeaning: string | null };
  /** The engine's analysis of the run as it stands now (corrections applied); null with a reason when it cannot run. */
  analysis: unknown | null;
  analysisError: string | null;
  readings: ReadingRow[];
  checkpoints: CheckpointRow[];
  events: RunEventRow[];
  calibrations: CalibrationUsed[];
  comments: Comment[];
  review: ReviewEvent[];
  attachments: Attachment[];
  history: HistoryEntry[];
  /**
   * Devices whose wall clock was far off (device minus server, ms) when they synced this run. Nothing in the run is
   * ordered or resolved by device time; the flag tells the reader that device times shown may be off.
   */
  clockFlags: { deviceId: string; offsetMs: number; flaggedAt: string }[];
  /** What the caller may do here. */
  can: { comment: boolean; submit: boolean; review: boolean; reopen: boolean; attach: boolean };
}

// ---------- import ----------

export const importMappingSchema = z
  .object({
    /** Column holding run time in seconds (or m:ss). */
    time: z.string().optional(),
    /** Column holding the delivered volume in mL (a manual titration typed elsewhere). */
    volume: z.string().optional(),
    pH: z.string().min(1, 'Choose the pH column.'),
    mV: z.string().optional(),
  })
  .refine((m) => Boolean(m.time) !== Boolean(m.volume), { message: 'Choose either a time column or a volume column.', path: ['time'] });
export type ImportMapping = z.infer<typeof importMappingSchema>;

export const importSetupSchema = z.object({
  sampleName: z.string().trim().min(1, 'Name the sample.').max(200),
  sampleVolumeMl: z.number().positive('Sample volume must be greater than zero (mL).'),
  sampleMassG: z.number().positive('Sample mass must be greater than zero (g).').optional(),
  acidProtons: z.number().int().min(1).max(6).optional(),
  titrantConcentrationM: z.number().positive('Titrant concentration must be greater than zero (mol/L).'),
  titrantLot: z.string().trim().max(200).optional(),
  /** Drip rate that turns time into volume; with a volume column it only records how the volumes were mapped. */
  rateMlPerS: z.number().positive('Drip rate must be greater than zero (mL/s).'),
  temperatureC: z.number().min(0).max(60).optional(),
  notes: z.string().max(20_000).default(''),
});
export type ImportSetup = z.input<typeof importSetupSchema>;

export const importPreviewBodySchema = z.object({
  csv: z.string().min(1, 'The file is empty.').max(5_000_000, 'The file is larger than 5 MB.'),
  mapping: z.unknown().optional(),
});
export const importBodySchema = z.object({
  csv: z.string().min(1, 'The file is empty.').max(5_000_000, 'The file is larger than 5 MB.'),
  mapping: importMappingSchema,
  setup: importSetupSchema,
});
export type ImportBody = z.input<typeof importBodySchema>;

export interface ImportRowError {
  /** 1-based line number in the file (the header is line 1). */
  line: number;
  column: string | null;
  message: string;
}

export interface ImportPreview {
  columns: string[];
  /** First rows as parsed (strings). */
  sample: Record<string, string>[];
  rowCount: number;
  /** A guess at the mapping from the column names. */
  suggested: Partial<Record<'time' | 'volume' | 'pH' | 'mV', string>>;
  /** With a mapping: the rows as they would be imported, and every row's error. */
  parsed: { line: number; timeS: number; pH: number | null; mV: number | null }[];
  errors: ImportRowError[];
}
