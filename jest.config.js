/**
 * One `jest` run, three projects:
 *  - node: shared/, server/, worker/ and CLI tests, compiled by @swc/jest with decorator
 *    metadata (TypeORM needs it; tsx does not emit it).
 *  - app:  React Native components through the jest-expo preset (babel-preset-expo).
 *  - e2e:  headless Chromium against the real server serving the built web app.
 * scripts/test.ts starts PostgreSQL and MailDev first and passes their addresses in env.
 *
 * Timeouts are sized for a busy two-core machine (several runs at once), not for a quiet
 * laptop: jest's 5 s default failed API tests by timing alone. testTimeout is a global
 * option in jest 29, so the browser project raises its own in tests/helpers/e2e-setup.ts.
 */
const swc = [
  '@swc/jest',
  {
    jsc: {
      parser: { syntax: 'typescript', decorators: true, tsx: false },
      transform: { legacyDecorator: true, decoratorMetadata: true },
      target: 'es2022',
    },
    module: { type: 'commonjs' },
  },
];

module.exports = {
  // Node and app tests: 90 s each (a route-policy sweep runs well past 5 s under load).
  testTimeout: 90_000,
  projects: [
    {
      displayName: 'node',
      testEnvironment: 'node',
      roots: ['<rootDir>/tests'],
      testMatch: ['<rootDir>/tests/{unit,api,worker,cli}/**/*.test.ts'],
      transform: { '^.+\\.(t|j)s$': swc },
      moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
      setupFiles: ['reflect-metadata'],
    },
    {
      displayName: 'app',
      preset: 'jest-expo/web',
      roots: ['<rootDir>/tests'],
      testMatch: ['<rootDir>/tests/app/**/*.test.tsx'],
      setupFilesAfterEnv: ['<rootDir>/tests/helpers/app-setup.ts'],
      moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
    },
    {
      displayName: 'e2e',
      testEnvironment: 'node',
      roots: ['<rootDir>/tests'],
      testMatch: ['<rootDir>/tests/e2e/**/*.test.ts'],
      transform: { '^.+\\.(t|j)s$': swc },
      moduleNameMapper: { '^@/(.*)$': '<rootDir>/$1' },
      setupFiles: ['reflect-metadata'],
      setupFilesAfterEnv: ['<rootDir>/tests/helpers/e2e-setup.ts'],
    },
  ],
};
