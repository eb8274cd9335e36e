/**
 * One `jest` run, three projects:
 *  - node: shared/, server/, worker/ and CLI tests, compiled by @swc/jest with decorator
 *    metadata (TypeORM needs it; tsx does not emit it).
 *  - app:  React Native components through the jest-expo preset (babel-preset-expo).
 *  - e2e:  headless Chromium against the real server serving the built web app.
 * scripts/test.ts starts PostgreSQL and MailDev first and passes their addresses in env.
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
    },
  ],
};
