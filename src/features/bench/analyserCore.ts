// The analyser contract (analyser.ts on the main thread, analyser.web.ts in a Web Worker) and the main-thread
// analyser both use. Kept apart so analyser.web.ts can fall back to it (Metro would resolve './analyser' to itself).
import type { RunDocumentInput } from '../../../shared/schemas/run-document';
import { analyse, type Analysis } from './liveAnalysis';

export interface Analyser {
  /** Analyses `doc`; `ms` is what the analysis itself took. */
  run(doc: RunDocumentInput): Promise<{ analysis: Analysis | null; ms: number }>;
  /** True when run() keeps the main thread free. */
  readonly offThread: boolean;
  dispose(): void;
}

/** Messages of the web worker (analysis.worker.ts). */
export interface AnalyserRequest {
  id: number;
  doc: RunDocumentInput;
}
export interface AnalyserReply {
  id: number;
  analysis: Analysis | null;
  ms: number;
}

export function mainThreadAnalyser(): Analyser {
  return {
    offThread: false,
    run: async (doc) => {
      const t0 = performance.now();
      const analysis = analyse(doc);
      return { analysis, ms: performance.now() - t0 };
    },
    dispose: () => undefined,
  };
}
