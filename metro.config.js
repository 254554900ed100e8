// Metro for the web export. expo-sqlite's web worker imports a .wasm file, so wasm must be an asset.
const path = require('path');
const { getDefaultConfig } = require('expo/metro-config');

const config = getDefaultConfig(__dirname);
config.resolver.assetExts.push('wasm');

// Server code, data and build output never go into the app bundle.
const root = __dirname.replace(/[/\\^$*+?.()|[\]{}]/g, '\\$&');
config.resolver.blockList = ['server', 'data', 'dist', '.tmp', 'tests'].map(
  (dir) => new RegExp(`^${root}${path.sep === '\\' ? '\\\\' : '/'}${dir.replace('.', '\\.')}[/\\\\].*`),
);

// zod's index of every language's messages is half of zod in the bundle; the app speaks English (src/vendor/).
const zodLocales = path.join(__dirname, 'src', 'vendor', 'zod-locales.js');
const isZodCore = /[\\/]node_modules[\\/]zod[\\/]v4[\\/](classic|core|mini)[\\/]/;
// expo-sqlite connects to the developer tools only in development (behind __DEV__), but the require is still
// bundled: in a production build it resolves to nothing.
const isSqliteDevTools = /[\\/]node_modules[\\/]expo-sqlite[\\/]build[\\/]SQLiteDevToolsClient\.js$/;
// Start-up files import single files of libraries whose index would bring all of them (Metro does not tree-shake),
// e.g. `@tanstack/react-query/build/modern/QueryClientProvider.js`. The packages do not export those paths, so
// they resolve here, by name, to the file itself (src/vendor/deep-imports.d.ts gives them their types).
const deepImports = new Map(
  [
    '@tanstack/react-query/build/modern/QueryClientProvider.js',
    '@tanstack/query-core/build/modern/queryClient.js',
    'expo-sqlite/build/SQLiteDatabase.js',
  ].map((name) => {
    const pkg = name.split('/').slice(0, name.startsWith('@') ? 2 : 1).join('/');
    return [name, path.join(path.dirname(require.resolve(`${pkg}/package.json`)), name.slice(pkg.length + 1))];
  }),
);
config.resolver.resolveRequest = (context, moduleName, platform) => {
  if (deepImports.has(moduleName)) return { type: 'sourceFile', filePath: deepImports.get(moduleName) };
  if (moduleName === '../locales/index.js' && isZodCore.test(context.originModulePath)) {
    return { type: 'sourceFile', filePath: zodLocales };
  }
  if (!context.dev && moduleName === 'expo/devtools' && isSqliteDevTools.test(context.originModulePath)) {
    return { type: 'empty' };
  }
  return context.resolveRequest(context, moduleName, platform);
};

module.exports = config;
