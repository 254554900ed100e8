import { randomUUID } from 'node:crypto';
import Papa from 'papaparse';
import { checkpoints, runs } from '../../db/schema';
import { insertReadingsIgnoringExisting } from '../repos/sync';
import type { ImportMapping, ImportPreview, ImportRowError, ImportSetup } from '../../shared/schemas/desk';
import { importMappingSchema, importSetupSchema } from '../../shared/schemas/desk';
import { PH_MAX, PH_MIN } from '../../shared/schemas/run-document';
import type { ServerContext } from '../auth/context';
import { HttpError } from '../http/errors';
import type { Caller } from '../http/routes';
import { audit } from './audit';
import { logRunChange } from './runs-sync-log';

/**
 * CSV import: a file logged by a meter or typed elsewhere becomes a run like any other. Parsed with papaparse;
 * the user maps columns (time or volume, pH, optional mV) after a preview; every row is checked and any error stops
 * the whole import (one transaction, nothing partial).
 */

const MAX_ROWS = 20_000;

function parseCsv(csv: string) {
  const out = Papa.parse<Record<string, string>>(csv.replace(/^\uFEFF/, ''), {
    header: true,
    skipEmptyLines: 'greedy',
    transformHeader: (h) => h.trim(),
  });
  return out;
}

const NUM = /^[+-]?(\d+([.,]\d*)?|[.,]\d+)(e[+-]?\d+)?$/i;
function number(text: string | undefined): number | null {
  const t = (text ?? '').trim();
  if (!NUM.test(t)) return null;
  return Number(t.replace(',', '.'));
}
/** Seconds, or m:ss(.s) / h:mm:ss as meters print elapsed time. */
function seconds(text: string | undefined): number | null {
  const t = (text ?? '').trim();
  const m = /^(?:(\d+):)?(\d{1,3}):(\d{1,2}(?:[.,]\d+)?)$/.exec(t);
  if (m) return Number(m[1] ?? 0) * 3600 + Number(m[2]) * 60 + Number(m[3].replace(',', '.'));
  return number(t);
}

export function suggestMapping(columns: string[]): ImportPreview['suggested'] {
  const find = (re: RegExp) => columns.find((c) => re.test(c));
  return {
    time: find(/^(time|t|elapsed|seconds?|time[ _(]*s\)?)\b/i) ?? find(/time/i),
    volume: find(/vol|ml\b/i),
    pH: find(/^ph\b/i) ?? find(/ph/i),
    mV: find(/\bmv\b|millivolt|potential/i),
  };
}

export interface Converted {
  rows: { line: number; timeS: number; pH: number | null; mV: number | null }[];
  errors: ImportRowError[];
}

/** Turns parsed rows into readings with the mapping; every bad row is reported with its line. */
export function convertRows(data: Record<string, string>[], columns: string[], mapping: ImportMapping, rateMlPerS: number | null): Converted {
  const errors: ImportRowError[] = [];
  for (const col of [mapping.time, mapping.volume, mapping.pH, mapping.mV]) {
    if (col && !columns.includes(col)) errors.push({ line: 1, column: col, message: `The file has no column "${col}".` });
  }
  if (errors.length) return { rows: [], errors };
  if (mapping.volume && !rateMlPerS) return { rows: [], errors: [{ line: 1, column: mapping.volume, message: 'A volume column needs the drip rate.' }] };
  const rows: Converted['rows'] = [];
  let last = -Infinity;
  data.forEach((r, i) => {
    const line = i + 2;
    let timeS: number | null;
    if (mapping.time) {
      timeS = seconds(r[mapping.time]);
      if (timeS === null || timeS < 0) return void errors.push({ line, column: mapping.time, message: `Time "${r[mapping.time] ?? ''}" is not a number of seconds (or m:ss).` });
    } else {
      const v = number(r[mapping.volume!]);
      if (v === null || v < 0) return void errors.push({ line, column: mapping.volume!, message: `Volume "${r[mapping.volume!] ?? ''}" is not a number of mL.` });
      timeS = v / rateMlPerS!;
    }
    const pHText = r[mapping.pH]?.trim() ?? '';
    const pH = pHText === '' && mapping.mV ? null : number(pHText);
    if (pHText !== '' || !mapping.mV) {
      if (pH === null) return void errors.push({ line, column: mapping.pH, message: `pH "${pHText}" is not a number.` });
      if (pH < PH_MIN || pH > PH_MAX) return void errors.push({ line, column: mapping.pH, message: `pH ${pH} is outside ${PH_MIN}…${PH_MAX}.` });
    }
    let mV: number | null = null;
    if (mapping.mV && (r[mapping.mV] ?? '').trim() !== '') {
      mV = number(r[mapping.mV]);
      if (mV === null || Math.abs(mV) > 2000) return void errors.push({ line, column: mapping.mV, message: `mV "${r[mapping.mV]}" is not a number within ±2000.` });
    }
    if (pH === null && mV === null) return void errors.push({ line, column: mapping.pH, message: 'The row has neither a pH nor an mV value.' });
    if (!(timeS > last)) {
      return void errors.push({ line, column: mapping.time ?? mapping.volume!, message: `The ${mapping.time ? 'time' : 'volume'} must increase from row to row (line ${line} is not after the row before).` });
    }
    last = timeS;
    rows.push({ line, timeS, pH, mV });
  });
  return { rows, errors };
}

function parsedFile(csv: string) {
  const out = parseCsv(csv);
  const columns = (out.meta.fields ?? []).filter((f) => f !== '');
  const parseErrors: ImportRowError[] = out.errors
    .filter((e) => e.code !== 'UndetectableDelimiter')
    .map((e) => ({ line: (e.row ?? 0) + 2, column: null, message: e.message }));
  if (!columns.length) throw new HttpError(422, 'import_invalid', 'The file has no header row with column names.');
  if (out.data.length > MAX_ROWS) throw new HttpError(422, 'import_invalid', `The file has ${out.data.length} rows; at most ${MAX_ROWS} can be imported.`);
  return { columns, data: out.data, parseErrors };
}

export function preview(csv: string, mappingInput: unknown, rateMlPerS?: number): ImportPreview {
  const { columns, data, parseErrors } = parsedFile(csv);
  const base: ImportPreview = { columns, sample: data.slice(0, 10), rowCount: data.length, suggested: suggestMapping(columns), parsed: [], errors: parseErrors };
  if (mappingInput === undefined) return base;
  const mapping = importMappingSchema.safeParse(mappingInput);
  if (!mapping.success) return { ...base, errors: [...parseErrors, ...mapping.error.issues.map((i) => ({ line: 1, column: null, message: i.message }))] };
  const conv = convertRows(data, columns, mapping.data, rateMlPerS ?? null);
  return { ...base, parsed: conv.rows.slice(0, 50), errors: [...parseErrors, ...conv.errors] };
}

/** The setup in the shape the bench records (src/features/bench/setup.ts), so the run reads like any other. */
function setupOf(s: ReturnType<typeof importSetupSchema.parse>) {
  return {
    sample: { volumeMl: s.sampleVolumeMl, ...(s.sampleMassG ? { massG: s.sampleMassG } : {}), ...(s.acidProtons ? { acidProtons: s.acidProtons } : {}) },
    titrant: { source: 'manual', concentrationM: s.titrantConcentrationM, ...(s.titrantLot ? { lotLabel: s.titrantLot } : {}) },
    delivery: { source: 'manual', rateMlPerS: s.rateMlPerS, startBuretteMl: 0 },
    ...(s.temperatureC !== undefined ? { temperatureC: s.temperatureC } : {}),
    imported: true,
  };
}

export async function importRun(app: ServerContext, caller: Caller, labId: string, body: { csv: string; mapping: ImportMapping; setup: ImportSetup }) {
  const setup = importSetupSchema.parse(body.setup);
  const { columns, data, parseErrors } = parsedFile(body.csv);
  const conv = convertRows(data, columns, body.mapping, setup.rateMlPerS);
  const errors = [...parseErrors, ...conv.errors];
  if (errors.length) {
    throw new HttpError(422, 'import_invalid', `${errors.length} row${errors.length > 1 ? 's have' : ' has'} errors; nothing was imported.`, { errors: errors.slice(0, 200), errorCount: errors.length });
  }
  if (!conv.rows.length) throw new HttpError(422, 'import_invalid', 'The file has no data rows; nothing was imported.');
  const runId = randomUUID();
  const now = app.now();
  await app.database.db.transaction(async (tx) => {
    await tx.insert(runs).values({
      id: runId,
      labId,
      analystId: caller.userId,
      sampleName: setup.sampleName,
      status: 'finished',
      setup: setupOf(setup),
      notes: setup.notes,
      createdAt: now,
      updatedAt: now,
    });
    const rows = conv.rows.map((r) => ({ id: randomUUID(), runId, labId, kind: 'reading', timeS: r.timeS, pH: r.pH, mV: r.mV, receivedAt: now }));
    const checkpointId = randomUUID();
    await tx.insert(checkpoints).values({ id: checkpointId, runId, labId, timeS: 0, buretteMl: 0, receivedAt: now });
    await logRunChange(tx, { labId, runId, checkpointIds: [checkpointId] });
    // Readings take their places in sync's change log as they go in (after their run's), so phones pull them.
    await insertReadingsIgnoringExisting(tx, rows);
    await audit(tx, {
      labId,
      actorId: caller.userId,
      action: 'run.import',
      entity: 'run',
      entityId: runId,
      after: { fileRows: conv.rows.length, columns, mapping: body.mapping, sampleName: setup.sampleName },
    });
  });
  return { runId, readings: conv.rows.length };
}
