// The engine's analysis while readings arrive, kept off the tap path: it runs after the screen has shown the new
// reading, and never more often than its own cost allows (about 5 % of the main thread), so a long run stays
// responsive.
import { useEffect, useRef, useState } from 'react';
import { analyzeRun } from '../../../shared/engine';
import type { AnalysisResult, RunDocumentInput } from '../../../shared/schemas/run-document';

export type Analysis = { result: AnalysisResult; error: null } | { result: null; error: string };

const MIN_GAP_MS = 1500;
const BUSY_SHARE = 20; // wait 20 × the last analysis time between runs

export function analyse(doc: RunDocumentInput | null): Analysis | null {
  if (!doc) return null;
  try {
    return { result: analyzeRun(doc as never), error: null };
  } catch (e) {
    return { result: null, error: e instanceof Error ? e.message : String(e) };
  }
}

export function useLiveAnalysis(doc: RunDocumentInput | null, enabled: boolean): Analysis | null {
  const [analysis, setAnalysis] = useState<Analysis | null>(null);
  const docRef = useRef(doc);
  docRef.current = doc;
  const nextAllowed = useRef(0);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const lastDoc = useRef<RunDocumentInput | null>(null);

  useEffect(() => {
    if (!enabled || !doc) return;
    if (timer.current) return; // one run scheduled already; it picks up the newest document
    const wait = Math.max(0, nextAllowed.current - performance.now());
    timer.current = setTimeout(() => {
      timer.current = null;
      const d = docRef.current;
      if (!d || d === lastDoc.current) return;
      lastDoc.current = d;
      const t0 = performance.now();
      const a = analyse(d);
      const cost = performance.now() - t0;
      nextAllowed.current = performance.now() + Math.max(MIN_GAP_MS, BUSY_SHARE * cost);
      setAnalysis(a);
    }, Math.max(wait, 50));
  }, [doc, enabled]);

  useEffect(
    () => () => {
      if (timer.current) clearTimeout(timer.current);
    },
    [],
  );
  return analysis;
}
