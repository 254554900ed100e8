// The engine's analysis of a run document, as the bench shows it: the result, or the engine's reason as text. Pure
// (no React), so the analysis worker (analysis.worker.ts) and the main thread share it.
import { analyzeRun } from '../../../shared/engine';
import type { AnalysisResult, RunDocumentInput } from '../../../shared/schemas/run-document';

export type Analysis = { result: AnalysisResult; error: null } | { result: null; error: string };

export function analyse(doc: RunDocumentInput | null): Analysis | null {
  if (!doc) return null;
  try {
    return { result: analyzeRun(doc as never), error: null };
  } catch (e) {
    return { result: null, error: e instanceof Error ? e.message : String(e) };
  }
}
