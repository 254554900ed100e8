// Plain shapes of the local records (camelCase mirrors of the tables in migrations.ts).
export type RunStatus = 'ready' | 'running' | 'paused' | 'finished' | 'submitted';
export type RunEventKind = 'start' | 'pause' | 'resume' | 'finish' | 'refill' | 'discard-mark' | 'submit' | 'clock-gap';
export type MarkKind = 'reading' | 'checkpoint';
export type PHSource = 'typed' | 'mv-calibrated' | 'mv-only' | 'void';

export interface RunRow {
  id: string;
  deviceId: string;
  analystId: string;
  labId: string | null;
  label: string;
  setup: unknown;
  status: RunStatus;
  notes: string;
  createdWallMs: number;
  updatedWallMs: number;
  localVersion: number;
  serverVersion: number | null;
}

export interface RunEventRow {
  id: string;
  runId: string;
  kind: RunEventKind;
  monoMs: number;
  wallMs: number;
  data: Record<string, unknown> | null;
}

export interface MarkRow {
  id: string;
  runId: string;
  kind: MarkKind;
  timeS: number;
  monoMs: number;
  wallMs: number;
}

export interface ReadingRow {
  id: string;
  runId: string;
  markId: string;
  timeS: number;
  pH: number | null;
  mV: number | null;
  pHSource: PHSource;
  replacesId: string | null;
  reason: string | null;
  voided: boolean;
  wallMs: number;
}

export interface CheckpointRow {
  id: string;
  runId: string;
  markId: string;
  timeS: number;
  buretteMl: number | null;
  replacesId: string | null;
  reason: string | null;
  voided: boolean;
  wallMs: number;
}

export interface RunRecord {
  run: RunRow;
  events: RunEventRow[];
  marks: MarkRow[];
  readings: ReadingRow[];
  checkpoints: CheckpointRow[];
}

export interface DeviceRow {
  id: string;
  analystId: string;
  analystName: string;
}

export interface OutboxRow {
  seq: number;
  entity: 'run' | 'run_event' | 'mark' | 'reading' | 'checkpoint';
  recordId: string;
  op: 'insert' | 'update';
  /**
   * The row's record as JSON-decoded from the queue. Null for a mark as the sync reads the queue: a mark never goes
   * out (its time travels with its reading), and decoding half of a long offline run for nothing cost the push.
   */
  payload: unknown;
  createdWallMs: number;
  state: 'pending' | 'sent' | 'acked' | 'rejected';
  attempts: number;
  lastError: string | null;
}
