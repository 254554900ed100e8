// Post-export step of build-web.mjs: makes dist/ installable and openable offline.
//  - a web manifest (name, colours from app.json, the 192/512 px icons) linked from index.html;
//  - a service worker generated with workbox-build that precaches the whole export (shell, bundles, sqlite wasm,
//    fonts) and answers every navigation with the cached index.html (single-page app; /api is never cached).
// Precached responses keep the server's COOP/COEP/CORP headers, so an offline page is still cross-origin isolated.
import { copyFileSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { generateSW } from 'workbox-build';

export async function addOfflineSupport(root, dist) {
  const expo = JSON.parse(readFileSync(path.join(root, 'app.json'), 'utf8')).expo;
  mkdirSync(path.join(dist, 'icons'), { recursive: true });
  for (const size of [192, 512]) copyFileSync(path.join(root, 'assets', `icon-${size}.png`), path.join(dist, 'icons', `icon-${size}.png`));
  const manifest = {
    name: expo.web?.name ?? expo.name,
    short_name: expo.web?.shortName ?? expo.name,
    description: 'Bench clock and logbook for weak-acid titrations.',
    start_url: '/bench',
    scope: '/',
    display: 'standalone',
    orientation: 'portrait',
    background_color: expo.web?.backgroundColor ?? '#FFFFFF',
    theme_color: expo.web?.themeColor ?? '#000000',
    icons: [
      { src: '/icons/icon-192.png', sizes: '192x192', type: 'image/png', purpose: 'any' },
      { src: '/icons/icon-512.png', sizes: '512x512', type: 'image/png', purpose: 'any' },
    ],
  };
  writeFileSync(path.join(dist, 'manifest.webmanifest'), JSON.stringify(manifest, null, 2));

  const indexFile = path.join(dist, 'index.html');
  let html = readFileSync(indexFile, 'utf8');
  if (!html.includes('rel="manifest"')) {
    const head = [
      '<link rel="manifest" href="/manifest.webmanifest" />',
      `<meta name="theme-color" content="${manifest.theme_color}" />`,
      '<link rel="apple-touch-icon" href="/icons/icon-192.png" />',
    ].join('');
    html = html.replace('</head>', `${head}</head>`);
    writeFileSync(indexFile, html);
  }

  const { count, size, warnings } = await generateSW({
    globDirectory: dist,
    globPatterns: ['**/*.{html,js,css,wasm,ttf,woff2,png,ico,webmanifest}'],
    globIgnores: ['**/*.map', 'sw.js', 'workbox-*.js', 'metadata.json'],
    swDest: path.join(dist, 'sw.js'),
    navigateFallback: '/index.html',
    navigateFallbackDenylist: [/^\/api\//],
    // Hashed bundle names change with their content: no extra revision query needed for them.
    dontCacheBustURLsMatching: /\/_expo\/static\/|\.[0-9a-f]{32}\./,
    maximumFileSizeToCacheInBytes: 16 * 1024 * 1024,
    cleanupOutdatedCaches: true,
    clientsClaim: true,
    // A new version waits until every tab of the old one is closed: never swap code under a running titration.
    skipWaiting: false,
    inlineWorkboxRuntime: true,
    sourcemap: false,
    mode: 'production',
  });
  for (const w of warnings) console.warn(`service worker: ${w}`);
  console.log(`Service worker: ${count} files precached (${(size / 1024).toFixed(0)} KiB); manifest linked.`);
}
