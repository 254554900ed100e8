// The engine's analysis while readings arrive, kept off the tap path: it runs in a Web Worker on the web
// (analyser.web.ts), always on the newest document and one run at a time. Where it has to share the main thread it
// runs after the screen has shown the new reading, and never more often than its own cost allows (about 5 % of the
// main thread), so a long run stays responsive.
import { startTransition, useEffect, useRef, useState } from 'react';
import type { RunDocumentInput } from '../../../shared/schemas/run-document';
import { createAnalyser, type Analyser } from './analyser';
import type { LiveAnalysis } from './analyserCore';

export type { LiveAnalysis, LiveResult } from './analyserCore';

/** Spacing of runs: at least `minGapMs`, and `share` × the last run's cost. */
const PACE = {
  mainThread: { minGapMs: 1500, share: 20 },
  // Off the main thread the limit is the battery and the other core, not the taps.
  worker: { minGapMs: 300, share: 2 },
};

export function useLiveAnalysis(doc: RunDocumentInput | null, enabled: boolean): LiveAnalysis | null {
  const [analysis, setAnalysis] = useState<LiveAnalysis | null>(null);
  const docRef = useRef(doc);
  docRef.current = doc;
  const analyser = useRef<Analyser | null>(null);
  const nextAllowed = useRef(0);
  const busy = useRef(false);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const lastDoc = useRef<RunDocumentInput | null>(null);
  const live = useRef(true);

  useEffect(() => {
    live.current = true;
    return () => {
      live.current = false;
      if (timer.current) clearTimeout(timer.current);
      timer.current = null;
      analyser.current?.dispose();
      analyser.current = null;
    };
  }, []);

  useEffect(() => {
    if (!enabled || !doc) return;
    const schedule = () => {
      if (timer.current || busy.current) return; // a run is due or under way; it picks up the newest document
      const wait = Math.max(50, nextAllowed.current - performance.now());
      timer.current = setTimeout(() => {
        timer.current = null;
        const d = docRef.current;
        if (!live.current || !d || d === lastDoc.current) return;
        lastDoc.current = d;
        analyser.current ??= createAnalyser();
        const a = analyser.current;
        busy.current = true;
        void a.run(d).then(({ analysis: result, ms }) => {
          busy.current = false;
          if (!live.current) return;
          const pace = a.offThread ? PACE.worker : PACE.mainThread;
          nextAllowed.current = performance.now() + Math.max(pace.minGapMs, pace.share * ms);
          // A transition: the chart and estimates it redraws give way to a tap that comes meanwhile.
          startTransition(() => setAnalysis(result));
          if (docRef.current !== d) schedule(); // readings came in meanwhile
        });
      }, wait);
    };
    schedule();
  }, [doc, enabled]);

  return analysis;
}
