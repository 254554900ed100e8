// Web Worker for the live analysis (started by analyser.web.ts): one request at a time, answered with its id. The
// answer is the live part of the result, its long columns transferred (see analyserCore.ts).
import { analyse } from './liveAnalysis';
import { liveOf, packReply, unpackRequest, type AnalyserReply, type AnalyserRequest } from './analyserCore';

const scope = self as unknown as { onmessage: ((e: MessageEvent<AnalyserRequest>) => void) | null; postMessage(m: AnalyserReply, transfer: ArrayBuffer[]): void };

scope.onmessage = (e) => {
  const t0 = performance.now();
  const analysis = analyse(unpackRequest(e.data));
  const { message, transfer } = packReply(e.data.id, liveOf(analysis), performance.now() - t0);
  scope.postMessage(message, transfer);
};
