/**
 * ESLint (flat config): Expo's config for SDK 56 (React, hooks, import and Expo rules), the
 * typescript-eslint recommended rules, and import/no-cycle. Layout is Prettier's job
 * (.prettierrc), so eslint-config-prettier switches off every rule that would fight it.
 *
 * Rules that catch mistakes are errors; `npm run lint` (eslint, then `prettier --check`) fails
 * on any error and runs inside `npm test` (scripts/test.ts).
 */
const { defineConfig, globalIgnores } = require('eslint/config');
const expoConfig = require('eslint-config-expo/flat');
const prettierConfig = require('eslint-config-prettier');
const tseslint = require('typescript-eslint');
const globals = require('globals');

module.exports = defineConfig([
  globalIgnores(['node_modules/', 'dist/', '.expo/', '.data/', '.pg/', '.pg-test/', '.logs/', 'coverage/', 'web-build/', 'bench-output/', 'expo-env.d.ts']),
  expoConfig,
  {
    // A disable comment that disables nothing hides nothing and misleads; --fix removes it.
    linterOptions: { reportUnusedDisableDirectives: 'error' },
  },
  {
    // TypeScript already checks what packages export; reading node_modules for the import
    // rules (and for no-cycle) made a run several times slower.
    settings: { 'import/ignore': ['node_modules'] },
    rules: {
      // A runtime import circle makes one module see another half-initialised.
      'import/no-cycle': ['error', { ignoreExternal: true }],
      'import/no-duplicates': 'error',
      eqeqeq: ['error', 'smart'],
      // `fc.integer()` on fast-check's default export is its documented use, not a mistake.
      'import/no-named-as-default-member': 'off',
      // An apostrophe or quote in JSX text renders as written; `>` and `}` are the ones that
      // usually mean a slip in the markup.
      'react/no-unescaped-entities': ['error', { forbid: ['>', '}'] }],
      // setState in an effect costs an extra render; it gives no wrong result, so it is shown
      // for review rather than refused.
      'react-hooks/set-state-in-effect': 'warn',
    },
  },
  {
    files: ['**/*.ts', '**/*.tsx'],
    extends: [tseslint.configs.recommended],
    rules: {
      // Unused code is a mistake here, except names starting with _ (kept on purpose).
      '@typescript-eslint/no-unused-vars': [
        'error',
        { args: 'after-used', argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true },
      ],
      // Express's router stack, pg rows and test doubles are untyped; `any` there is deliberate
      // and reviewed, so it is shown (warn) rather than refused.
      '@typescript-eslint/no-explicit-any': 'warn',
      // Express augments its namespace through `declare global { namespace Express }`.
      '@typescript-eslint/no-namespace': ['error', { allowDeclarations: true }],
      // `interface User extends SessionUser {}` is how passport's req.user gets its type.
      '@typescript-eslint/no-empty-object-type': ['error', { allowInterfaces: 'with-single-extends' }],
      // `string[]` and `Array<T>` both read well; which one is layout, not correctness.
      '@typescript-eslint/array-type': 'off',
    },
  },
  {
    // Node code: the server, the worker, scripts and tests run under Node, not in a browser.
    files: ['server/**', 'worker/**', 'scripts/**', 'tests/**', '*.js'],
    languageOptions: { globals: { ...globals.node } },
  },
  {
    files: ['tests/**'],
    languageOptions: { globals: { ...globals.jest } },
  },
  {
    // CommonJS configuration files read by Node, Babel, Jest and ESLint.
    files: ['*.js'],
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
  prettierConfig,
]);
