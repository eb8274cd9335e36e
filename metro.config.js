// Metro (the web build): Expo's defaults plus one stand-in. zod's locale index pulls in every
// language zod ships, and Metro keeps unused exports, so the web bundle gets web/zod-locales.ts
// in its place (English only; see that file and docs/design.md#web-bundle).
const path = require('node:path');
const { getDefaultConfig } = require('expo/metro-config');

const config = getDefaultConfig(__dirname);
const zodLocalesIndex = /[\\/]node_modules[\\/]zod[\\/]v4[\\/]locales[\\/]index\.c?js$/;
const zodLocalesStandIn = path.join(__dirname, 'web', 'zod-locales.ts');

config.resolver.resolveRequest = (context, moduleName, platform) => {
  const resolved = context.resolveRequest(context, moduleName, platform);
  if (resolved.type === 'sourceFile' && zodLocalesIndex.test(resolved.filePath)) {
    return { type: 'sourceFile', filePath: zodLocalesStandIn };
  }
  return resolved;
};

module.exports = config;
