/**
 * Initial JS payload of the web export (gzip), against a bare Expo Router app built in the same run with the same
 * dependencies and bundler settings. Goal (issue 9): ratio ≤ 1.3.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';

const root = process.cwd();

function initialJs(distDir: string): { raw: number; gzip: number; files: number } {
  const html = readFileSync(path.join(distDir, 'index.html'), 'utf8');
  const srcs = [...html.matchAll(/<script[^>]+src="([^"]+)"/g)].map((m) => m[1]);
  let raw = 0;
  let gzip = 0;
  for (const src of srcs) {
    const buf = readFileSync(path.join(distDir, src.replace(/^\//, '')));
    raw += buf.length;
    gzip += gzipSync(buf, { level: 9 }).length;
  }
  return { raw, gzip, files: srcs.length };
}

function exportWeb(cwd: string, outDir: string) {
  const env = { ...process.env, EXPO_OFFLINE: '1', EXPO_NO_TELEMETRY: '1', EXPO_NO_DEPENDENCY_VALIDATION: '1', CI: '1' };
  const r = spawnSync('npx', ['expo', 'export', '-p', 'web', '--output-dir', outDir], { cwd, env, stdio: ['ignore', 'ignore', 'inherit'] });
  if (r.status !== 0) throw new Error(`expo export failed in ${cwd}`);
}

// Ours, as served.
const build = spawnSync(process.execPath, ['server/build-web.mjs', '--if-stale'], { stdio: ['ignore', 'ignore', 'inherit'] });
if (build.status !== 0) throw new Error('our web export did not build');
const ours = initialJs(path.join(root, 'dist'));

// A bare Expo Router app: one route, the same node_modules (it sits inside the checkout, so resolution walks up).
const bare = path.join(root, '.tmp', 'bare-router-app');
rmSync(bare, { recursive: true, force: true });
mkdirSync(path.join(bare, 'app'), { recursive: true });
writeFileSync(path.join(bare, 'package.json'), JSON.stringify({ name: 'bare-router-app', private: true, main: 'expo-router/entry' }));
writeFileSync(
  path.join(bare, 'app.json'),
  JSON.stringify({ expo: { name: 'bare', slug: 'bare', web: { bundler: 'metro', output: 'single' }, plugins: ['expo-router'] } }),
);
writeFileSync(
  path.join(bare, 'metro.config.js'),
  `const path = require('path');\nconst { getDefaultConfig } = require('expo/metro-config');\nconst config = getDefaultConfig(__dirname);\nconfig.watchFolders = [${JSON.stringify(root)}];\nconfig.resolver.nodeModulesPaths = [path.join(${JSON.stringify(root)}, 'node_modules')];\nmodule.exports = config;\n`,
);
writeFileSync(path.join(bare, 'app', '_layout.tsx'), `import { Slot } from 'expo-router';\nexport default function Layout() { return <Slot />; }\n`);
writeFileSync(
  path.join(bare, 'app', 'index.tsx'),
  `import { Text } from 'react-native';\nexport default function Index() { return <Text>Hello</Text>; }\n`,
);
exportWeb(bare, 'dist');
const base = initialJs(path.join(bare, 'dist'));
rmSync(bare, { recursive: true, force: true });

const ratio = ours.gzip / base.gzip;
const kb = (n: number) => Math.round(n / 102.4) / 10;
console.log(
  JSON.stringify({ figure: 'web: initial JS payload (gzip)', value: kb(ours.gzip), unit: 'KiB', goal: '<= 1.3x bare Expo Router app', meetsGoal: ratio <= 1.3, ratio }),
);
console.log(JSON.stringify({ figure: 'web: initial JS payload (raw)', value: kb(ours.raw), unit: 'KiB', note: `${ours.files} script(s)` }));
console.log(JSON.stringify({ figure: 'web: bare Expo Router app, initial JS (gzip)', value: kb(base.gzip), unit: 'KiB', note: 'same run, same dependencies' }));
