import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import vm from 'node:vm';
import { afterEach, describe, expect, it } from 'vitest';
import { dropSourceMaps, splitCommonChunk } from './web-chunks.mjs';

// A small export in Metro's production shape: module 1 is the entry; routes `_layout` (first screen), `other` and
// `third` are lazy chunks. Shared modules: 20 (layout and other), 21 → 22 (other and third only).
const WEB = '/_expo/static/js/web/';
const mod = (id: number, deps: unknown, body = '') => `__d(function(g,r,i,a,m,e,d){${body}},${id},${JSON.stringify(deps)});`;

let dist = '';
afterEach(() => rmSync(dist, { recursive: true, force: true }));

function fakeExport() {
  dist = mkdtempSync(path.join(tmpdir(), 'web-chunks-'));
  const dir = path.join(dist, WEB);
  mkdirSync(dir, { recursive: true });
  const files: Record<string, [string, string[]]> = {
    '__expo-metro-runtime-0.js': ['var __METRO_GLOBAL_PREFIX__="";', []],
    '__common-c.js': [[mod(20, [], 'm.exports=20;'), mod(21, [22], 'm.exports=21+r(d[0]);'), mod(22, [], 'm.exports=1;')].join('\n'), []],
    'entry-e.js': [
      `${mod(1, { 0: 10, 1: 11, 2: 12, paths: { 10: `${WEB}_layout-l.js`, 11: `${WEB}other-o.js`, 12: `${WEB}third-t.js` } })}\n__r(1);`,
      ['/app?ctx=1'],
    ],
    '_layout-l.js': [mod(10, [20], `r(d[0]);m.exports='layout';`), ['/app/_layout.tsx']],
    'other-o.js': [mod(11, [20, 21], `m.exports=[r(d[0]),r(d[1])];`), ['/app/other.tsx']],
    'third-t.js': [mod(12, [21], `m.exports=r(d[0]);`), ['/app/third.tsx']],
    'worker-w.js': ['var __BUNDLE_START_TIME__=0;self.onmessage=null;', []],
  };
  for (const [name, [code, sources]] of Object.entries(files)) {
    writeFileSync(path.join(dir, name), `${code}\n//# sourceMappingURL=${WEB}${name}.map`);
    writeFileSync(path.join(dir, `${name}.map`), JSON.stringify({ version: 3, sources, mappings: '' }));
  }
  const scripts = ['__expo-metro-runtime-0.js', '__common-c.js', 'entry-e.js'].map((s) => `<script src="${WEB}${s}" defer></script>`);
  writeFileSync(path.join(dist, 'index.html'), `<html><body>${scripts.join('')}</body></html>`);
  return dir;
}

/** Just enough of Metro's runtime: define, require, and a chunk loader that evaluates a file of the export. */
function runtime(dir: string) {
  const factories = new Map<number, { factory: (...a: unknown[]) => void; deps: unknown }>();
  const cache = new Map<number, { exports: unknown }>();
  const loaded: string[] = [];
  const context = vm.createContext({
    __d: (factory: (...a: unknown[]) => void, id: number, deps: unknown) => factories.has(id) || factories.set(id, { factory, deps }),
    __r: () => undefined,
  }) as Record<string, unknown>;
  context.globalThis = context;
  const req = (id: number): unknown => {
    const hit = cache.get(id);
    if (hit) return hit.exports;
    const f = factories.get(id);
    if (!f) throw new Error(`Requiring unknown module "${id}"`);
    const m = { exports: {} as unknown };
    cache.set(id, m);
    f.factory(context, req, null, null, m, m.exports, f.deps);
    return m.exports;
  };
  const run = (file: string) => vm.runInContext(readFileSync(path.join(dir, file), 'utf8'), context);
  return {
    context,
    req,
    loaded,
    run,
    // What the entry does when it starts: Metro's loader, set on the global (the split chunk wraps it).
    installLoader() {
      context.__loadBundleAsync = (p: string) => {
        loaded.push(path.posix.basename(p));
        run(path.posix.basename(p));
        return Promise.resolve();
      };
    },
    load: (p: string) => (context.__loadBundleAsync as (p: string) => Promise<void>)(p),
  };
}

describe('splitting the common chunk (web-chunks.mjs)', () => {
  it('keeps at start what the first screen reaches; a later chunk loads the rest with it', async () => {
    const dir = fakeExport();
    expect(splitCommonChunk(dist, ['app/_layout.tsx'])).toBe('1 shared modules load at start, 2 later (2 chunks wait for them)');
    dropSourceMaps(dist);

    const names = readdirSync(dir);
    expect(names.some((n) => n.endsWith('.map'))).toBe(false);
    expect(names).not.toContain('__common-c.js');
    const common = names.find((n) => /^__common-[0-9a-f]{32}\.js$/.test(n))!;
    const later = names.find((n) => /^__later-[0-9a-f]{32}\.js$/.test(n))!;
    expect(readFileSync(path.join(dist, 'index.html'), 'utf8')).toContain(`${WEB}${common}`);
    expect(readFileSync(path.join(dir, later), 'utf8')).not.toMatch(/},20,/);

    // As a page would run it: runtime, the new common chunk, the entry (its loader), then the routes on demand.
    const rt = runtime(dir);
    rt.run('__expo-metro-runtime-0.js');
    rt.run(common);
    rt.installLoader();
    rt.run('entry-e.js');
    await rt.load(`${WEB}_layout-l.js`);
    expect(rt.req(10)).toBe('layout');
    expect(rt.loaded).toEqual(['_layout-l.js']);

    await rt.load(`${WEB}other-o.js`);
    expect(rt.loaded).toEqual(['_layout-l.js', later, 'other-o.js']);
    expect(rt.req(11)).toEqual([20, 22]);
    await rt.load(`${WEB}third-t.js`);
    expect(rt.req(12)).toBe(22);
  });

  it('leaves the export as it was when a start-up route cannot be found', () => {
    const dir = fakeExport();
    const before = readdirSync(dir).sort();
    expect(() => splitCommonChunk(dist, ['app/missing.tsx'])).toThrow(/app\/missing\.tsx is in 0 chunks/);
    expect(readdirSync(dir).sort()).toEqual(before);
  });

  it('refuses an export in which a required module is defined nowhere', () => {
    const dir = fakeExport();
    writeFileSync(path.join(dir, 'third-t.js'), mod(12, [99], ''));
    expect(() => splitCommonChunk(dist, ['app/_layout.tsx'])).toThrow(/module 99 is required but defined nowhere/);
  });
});
