// Babel is used by Metro (the web build) and by jest-expo for the app tests only;
// server, worker and shared tests are compiled by @swc/jest (see jest.config.js).
module.exports = function (api) {
  api.cache(true);
  return { presets: ['babel-preset-expo'] };
};
