// The analyser contract (analyser.ts on the main thread, analyser.web.ts in a Web Worker) and the main-thread
// analyser both use. Kept apart so analyser.web.ts can fall back to it (Metro would resolve './analyser' to itself).
//
// The live screen shows a few numbers and the derivative overlay of each analysis, not the whole engine result (a
// 2,000-reading run's result holds some 10,000 small objects). Messages to and from the worker carry only that,
// with the long columns (reading times and pH, the derivative) as typed arrays whose buffers are transferred: the
// main thread then copies and decodes almost nothing, so an analysis finishing never sits in a tap's way.
import type { AnalysisResult, RunDocumentInput } from '../../../shared/schemas/run-document';
import { analyse, type Analysis } from './liveAnalysis';

/** What the live screen shows of an analysis. */
export type LiveResult = Pick<AnalysisResult, 'equivalencePoints' | 'halfEquivalence' | 'pKa'> & {
  derivative: { volumeMl: number; dpHdV: number }[];
};
export type LiveAnalysis = { result: LiveResult; error: null } | { result: null; error: string };

export interface Analyser {
  /** Analyses `doc`; `ms` is what the analysis itself took. */
  run(doc: RunDocumentInput): Promise<{ analysis: LiveAnalysis | null; ms: number }>;
  /** True when run() keeps the main thread free. */
  readonly offThread: boolean;
  dispose(): void;
}

/** The live part of an engine analysis. */
export function liveOf(a: Analysis | null): LiveAnalysis | null {
  if (!a) return null;
  if (!a.result) return { result: null, error: a.error };
  const r = a.result;
  return {
    result: { equivalencePoints: r.equivalencePoints, halfEquivalence: r.halfEquivalence, pKa: r.pKa, derivative: r.derivative.map((d) => ({ volumeMl: d.volumeMl, dpHdV: d.dpHdV })) },
    error: null,
  };
}

// ---------- messages of the web worker (analysis.worker.ts) ----------

export interface AnalyserRequest {
  id: number;
  /** The document without its readings, which travel as the two columns below. */
  doc: Omit<RunDocumentInput, 'readings'>;
  timeS: Float64Array;
  pH: Float64Array;
}
export interface AnalyserReply {
  id: number;
  ms: number;
  error: string | null;
  /** The estimates (null with an error, or with no document). */
  est: Pick<AnalysisResult, 'equivalencePoints' | 'halfEquivalence' | 'pKa'> | null;
  dV: Float64Array;
  dY: Float64Array;
  /** True when there was no document to analyse. */
  none: boolean;
}

/** A request and the buffers to transfer with it. */
export function packRequest(id: number, doc: RunDocumentInput): { message: AnalyserRequest; transfer: ArrayBuffer[] } {
  const { readings, ...rest } = doc;
  const timeS = new Float64Array(readings.length);
  const pH = new Float64Array(readings.length);
  readings.forEach((r, i) => {
    timeS[i] = r.timeS;
    pH[i] = r.pH;
  });
  return { message: { id, doc: rest, timeS, pH }, transfer: [timeS.buffer, pH.buffer] };
}

export function unpackRequest(m: AnalyserRequest): RunDocumentInput {
  const readings: { timeS: number; pH: number }[] = new Array(m.timeS.length);
  for (let i = 0; i < m.timeS.length; i++) readings[i] = { timeS: m.timeS[i], pH: m.pH[i] };
  return { ...m.doc, readings } as RunDocumentInput;
}

export function packReply(id: number, live: LiveAnalysis | null, ms: number): { message: AnalyserReply; transfer: ArrayBuffer[] } {
  const d = live?.result?.derivative ?? [];
  const dV = new Float64Array(d.length);
  const dY = new Float64Array(d.length);
  d.forEach((p, i) => {
    dV[i] = p.volumeMl;
    dY[i] = p.dpHdV;
  });
  let est: AnalyserReply['est'] = null;
  if (live?.result) {
    const { derivative: _columns, ...rest } = live.result;
    est = rest;
  }
  return { message: { id, ms, error: live?.error ?? null, est, dV, dY, none: live === null }, transfer: [dV.buffer, dY.buffer] };
}

export function unpackReply(m: AnalyserReply): LiveAnalysis | null {
  if (m.none) return null;
  if (!m.est) return { result: null, error: m.error ?? 'The analysis gave no result.' };
  const derivative: LiveResult['derivative'] = new Array(m.dV.length);
  for (let i = 0; i < m.dV.length; i++) derivative[i] = { volumeMl: m.dV[i], dpHdV: m.dY[i] };
  return { result: { ...m.est, derivative }, error: null };
}

export function mainThreadAnalyser(): Analyser {
  return {
    offThread: false,
    run: async (doc) => {
      const t0 = performance.now();
      const analysis = liveOf(analyse(doc));
      return { analysis, ms: performance.now() - t0 };
    },
    dispose: () => undefined,
  };
}
