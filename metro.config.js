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
config.resolver.resolveRequest = (context, moduleName, platform) => {
  if (moduleName === '../locales/index.js' && isZodCore.test(context.originModulePath)) {
    return { type: 'sourceFile', filePath: zodLocales };
  }
  return context.resolveRequest(context, moduleName, platform);
};

module.exports = config;
