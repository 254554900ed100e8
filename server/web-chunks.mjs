// Post-export step of build-web.mjs: keeps the modules only later screens need out of the first page load.
//
// With async routes, Expo's serializer moves every module that two or more lazily loaded chunks share into one
// `__common` chunk, and index.html loads that chunk before the app starts. Nearly every screen after the first
// shares zod, the charts, the analysis engine… so they all arrive before the bench can draw. This step splits that
// chunk in two:
//  - `__common-<hash>.js` (still in index.html): the shared modules that the start-up chunks (the entry and the
//    route files listed in FIRST_SCREEN) reach through static imports;
//  - `__later-<hash>.js`: the rest, fetched together with (in parallel to) any lazily loaded chunk that needs it.
// A few lines at the top of the new common chunk wrap Metro's chunk loader (`__loadBundleAsync`, looked up on each
// dynamic import) so that a chunk listed as needing the later part waits for both files. Nothing is lost offline:
// the service worker precaches every file in the export, this one too.
//
// Chunks are read by evaluating them with a stand-in `__d` (Metro's module definition call), so nothing in them
// runs; each module is written back as `__d(<its own source text>, id, deps)`. Which chunk holds which route comes
// from the export's source maps. Every assumption is checked (each module defined once, every static dependency
// defined somewhere, every start-up route found); if one fails the export is left as Expo wrote it, with a warning.
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import vm from 'node:vm';

/** Route files the first visit needs before it can draw: `/` redirects to the bench. */
export const FIRST_SCREEN = ['app/_layout.tsx', 'app/index.tsx', 'app/bench/index.tsx'];

const JS_DIR = ['_expo', 'static', 'js', 'web'];

/** The modules a Metro chunk defines, or null when the file is not a plain list of module definitions. */
export function readChunk(code) {
  if (!code.trimStart().startsWith('__d(')) return null;
  const modules = [];
  const __d = (factory, id, deps) => modules.push({ id, source: factory.toString(), deps });
  // The entry ends by running its start modules (`__r(id)`); they are among its definitions already.
  vm.runInNewContext(code, { __d, __r: () => undefined }, { timeout: 10_000 });
  return modules;
}

/** Module ids a module needs synchronously (dynamic imports, listed in `deps.paths`, load their own chunk). */
export function staticDeps(deps) {
  if (Array.isArray(deps)) return deps;
  const lazy = new Set(Object.keys(deps.paths ?? {}));
  return Object.entries(deps)
    .filter(([k, v]) => k !== 'paths' && !lazy.has(String(v)))
    .map(([, v]) => v);
}

const write = (m) => `__d(${m.source},${m.id},${JSON.stringify(m.deps)});`;
const hashed = (prefix, code) => `${prefix}-${createHash('md5').update(code).digest('hex')}.js`;

/** The source files of a chunk, from its map: in a chunk of module definitions, one per module, in order. */
export function sourcesOf(dir, file) {
  try {
    return JSON.parse(readFileSync(path.join(dir, `${file}.map`), 'utf8')).sources ?? [];
  } catch {
    return [];
  }
}

/** Reads every chunk of an export: file name → modules (null for the runtime and worker bundles). */
export function readExport(dist) {
  const dir = path.join(dist, ...JS_DIR);
  const chunks = new Map();
  for (const f of readdirSync(dir).filter((n) => n.endsWith('.js'))) chunks.set(f, readChunk(readFileSync(path.join(dir, f), 'utf8')));
  return { dir, chunks };
}

/**
 * Works out the split without writing anything: which chunks the first screen loads (`startFiles`: the entry, any
 * other module chunk in index.html except the common one, and the chunks of the `firstScreen` route files, found
 * through the source maps), which shared modules it reaches (`keep`), which it does not (`later`), and which lazy
 * chunks need the latter (`waiting`). Returns null when the export has no common chunk. Throws on any surprise.
 */
export function planSplit(dist, firstScreen = FIRST_SCREEN) {
  const { dir, chunks } = readExport(dist);
  const html = readFileSync(path.join(dist, 'index.html'), 'utf8');
  const srcs = [...html.matchAll(/<script[^>]+src="([^"]+)"/g)].map((m) => m[1]);
  const scripts = srcs.map((s) => path.posix.basename(s));
  const commonFile = scripts.find((s) => s.startsWith('__common-'));
  if (!commonFile) return null;
  // Chunk paths as the loader is asked for them (the script's folder, with any base URL).
  const base = `${path.posix.dirname(srcs[scripts.indexOf(commonFile)])}/`;

  const startFiles = new Set(scripts.filter((s) => chunks.get(s) && s !== commonFile));
  for (const route of firstScreen) {
    const holders = [...chunks.keys()].filter((f) => chunks.get(f) && sourcesOf(dir, f).some((s) => s.replace(/^\/+/, '') === route));
    if (holders.length !== 1) throw new Error(`${route} is in ${holders.length} chunks (expected 1; are source maps exported?)`);
    startFiles.add(holders[0]);
  }

  const byId = new Map();
  for (const [f, modules] of chunks) {
    for (const m of modules ?? []) {
      if (byId.has(m.id)) throw new Error(`module ${m.id} is defined in two chunks`);
      byId.set(m.id, { ...m, file: f });
    }
  }
  const closure = (ids) => {
    const seen = new Set();
    const stack = [...ids];
    while (stack.length) {
      const id = stack.pop();
      if (seen.has(id)) continue;
      const m = byId.get(id);
      if (!m) throw new Error(`module ${id} is required but defined nowhere`);
      seen.add(id);
      stack.push(...staticDeps(m.deps));
    }
    return seen;
  };
  const idsIn = (f) => chunks.get(f).map((m) => m.id);

  const needed = closure([...startFiles].flatMap(idsIn));
  const common = chunks.get(commonFile);
  const keep = common.filter((m) => needed.has(m.id));
  const later = common.filter((m) => !needed.has(m.id));
  const laterIds = new Set(later.map((m) => m.id));
  const waiting = [...chunks.keys()].filter(
    (f) => chunks.get(f) && !startFiles.has(f) && f !== commonFile && [...closure(idsIn(f))].some((id) => laterIds.has(id)),
  );
  return { dir, html, chunks, base, commonFile, startFiles, keep, later, waiting };
}

/**
 * Splits dist's common chunk (see the top of this file). Returns a one-line summary for the build log.
 * `firstScreen` lists route source files (relative to the project root) needed before the first screen draws.
 */
export function splitCommonChunk(dist, firstScreen = FIRST_SCREEN) {
  const plan = planSplit(dist, firstScreen);
  if (!plan) return 'no common chunk: nothing to split';
  const { dir, html, base, commonFile, keep, later, waiting } = plan;
  if (!later.length) return 'every shared module is needed at start: nothing to split';

  const laterCode = later.map(write).join('\n') + '\n';
  const laterName = hashed('__later', laterCode);
  const loader = [
    '(function(g){',
    `var later=${JSON.stringify(base + laterName)},waits=${JSON.stringify(Object.fromEntries(waiting.map((f) => [base + f, 1])))};`,
    "var key=(typeof __METRO_GLOBAL_PREFIX__=='string'?__METRO_GLOBAL_PREFIX__:'')+'__loadBundleAsync',wrapped;",
    // Metro's loader caches by path and forgets failures, so asking for `later` again is cheap and retries.
    'function wrap(load){return function(p){return waits[p]?Promise.all([load(later),load(p)]).then(function(){}):load(p)}}',
    'if(g[key])wrapped=wrap(g[key]);',
    'Object.defineProperty(g,key,{configurable:true,get:function(){return wrapped},set:function(load){wrapped=wrap(load)}});',
    '})(globalThis);',
  ].join('');
  const commonCode = `${loader}\n${keep.map(write).join('\n')}\n`;
  const commonName = hashed('__common', commonCode);

  writeFileSync(path.join(dir, laterName), laterCode);
  writeFileSync(path.join(dir, commonName), commonCode);
  rmSync(path.join(dir, commonFile));
  writeFileSync(path.join(dist, 'index.html'), html.replace(commonFile, commonName));
  return `${keep.length} shared modules load at start, ${later.length} later (${waiting.length} chunks wait for them)`;
}

/** Source maps were exported only to find the routes: drop them and their references from the served files. */
export function dropSourceMaps(dist) {
  const dir = path.join(dist, ...JS_DIR);
  for (const f of readdirSync(dir)) {
    const file = path.join(dir, f);
    if (f.endsWith('.map')) rmSync(file);
    else if (f.endsWith('.js')) {
      const code = readFileSync(file, 'utf8');
      const stripped = code.replace(/\n\/\/# sourceMappingURL=[^\n]*/g, '');
      if (stripped !== code) writeFileSync(file, stripped);
    }
  }
}
