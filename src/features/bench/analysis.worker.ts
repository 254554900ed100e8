// Web Worker for the live analysis (started by analyser.web.ts): one request at a time, answered with its id.
import { analyse } from './liveAnalysis';
import type { AnalyserReply, AnalyserRequest } from './analyserCore';

const scope = self as unknown as { onmessage: ((e: MessageEvent<AnalyserRequest>) => void) | null; postMessage(m: AnalyserReply): void };

scope.onmessage = (e) => {
  const { id, doc } = e.data;
  const t0 = performance.now();
  const analysis = analyse(doc);
  scope.postMessage({ id, analysis, ms: performance.now() - t0 });
};
