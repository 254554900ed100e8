// Runs the live analysis somewhere that does not hold up a tap. Here (phones, tests): on the main thread, so the
// hook spaces the runs out by their cost. On the web (analyser.web.ts): in a Web Worker.
import { mainThreadAnalyser, type Analyser } from './analyserCore';

export type { Analyser } from './analyserCore';

export function createAnalyser(): Analyser {
  return mainThreadAnalyser();
}
