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

module.exports = config;
