// The live analysis in a Web Worker, so a long run's analysis never sits between a tap and the screen. Metro builds
// `new Worker(new URL('./analysis.worker', …))` into its own chunk, which the service worker precaches with the
// others (offline works the same). If the worker cannot start or fails, the main-thread analyser takes over.
import type { RunDocumentInput } from '../../../shared/schemas/run-document';
import { mainThreadAnalyser, packRequest, unpackReply, type Analyser, type AnalyserReply, type LiveAnalysis } from './analyserCore';

export type { Analyser } from './analyserCore';

export function createAnalyser(): Analyser {
  let worker: Worker;
  try {
    worker = new Worker(new URL('./analysis.worker', window.location.href));
  } catch {
    return mainThreadAnalyser();
  }
  let nextId = 0;
  let fallback: Analyser | null = null;
  const waiting = new Map<number, { doc: RunDocumentInput; resolve: (r: { analysis: LiveAnalysis | null; ms: number }) => void }>();
  const failOver = () => {
    // The worker is gone (failed to load, crashed): answer what it held on the main thread from now on.
    fallback ??= mainThreadAnalyser();
    worker.terminate();
    for (const [id, w] of waiting) {
      waiting.delete(id);
      void fallback.run(w.doc).then(w.resolve);
    }
  };
  worker.onmessage = (e: MessageEvent<AnalyserReply>) => {
    const w = waiting.get(e.data.id);
    if (!w) return;
    waiting.delete(e.data.id);
    w.resolve({ analysis: unpackReply(e.data), ms: e.data.ms });
  };
  worker.onerror = (e) => {
    e.preventDefault();
    failOver();
  };
  return {
    get offThread() {
      return fallback === null;
    },
    run(doc) {
      if (fallback) return fallback.run(doc);
      return new Promise((resolve) => {
        const id = nextId++;
        waiting.set(id, { doc, resolve });
        const { message, transfer } = packRequest(id, doc);
        worker.postMessage(message, transfer);
      });
    },
    dispose() {
      worker.terminate();
      waiting.clear();
    },
  };
}
