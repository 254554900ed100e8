// Types for web-chunks.mjs (plain JavaScript: build-web.mjs runs it with node, without a TypeScript step).
export const FIRST_SCREEN: string[];
export interface ChunkModule {
  id: number;
  source: string;
  deps: number[] | Record<string, unknown>;
}
export function readChunk(code: string): ChunkModule[] | null;
export function staticDeps(deps: ChunkModule['deps']): number[];
export function sourcesOf(dir: string, file: string): string[];
export function readExport(dist: string): { dir: string; chunks: Map<string, ChunkModule[] | null> };
export function planSplit(
  dist: string,
  firstScreen?: string[],
): {
  dir: string;
  html: string;
  chunks: Map<string, ChunkModule[] | null>;
  base: string;
  commonFile: string;
  startFiles: Set<string>;
  keep: ChunkModule[];
  later: ChunkModule[];
  waiting: string[];
} | null;
export function splitCommonChunk(dist: string, firstScreen?: string[]): string;
export function dropSourceMaps(dist: string): void;
