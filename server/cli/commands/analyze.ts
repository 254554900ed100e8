import { analyzeRun, type RunDocument } from '../../../shared/engine/index';

/** `analyze FILE.json`: a run document → the analysis result. */
export const analyze = (input: unknown) => analyzeRun(input as RunDocument);
