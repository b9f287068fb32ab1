// ESLint 9 flat configuration: rules that catch faults, not style (Prettier owns the layout).
// TypeScript files are linted with type information from tsconfig.check.json (sources and tests).
import js from '@eslint/js';
import globals from 'globals';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  {
    ignores: ['**/dist/**', '**/node_modules/**', 'docs/api/**', 'out/**', 'coverage/**', 'bench/results/**', 'packages/core/assembly/**'],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    rules: {
      // `_` names a value that is deliberately unused (a loop counter, a skipped tuple member).
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
    },
  },
  {
    files: ['**/*.ts'],
    languageOptions: {
      parserOptions: { project: ['./tsconfig.check.json'], tsconfigRootDir: import.meta.dirname },
    },
    rules: {
      // A dropped or misplaced promise loses an error or a write.
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/no-misused-promises': 'error',
      '@typescript-eslint/await-thenable': 'error',
      // A union member added later (a fading model, an array kind) must reach every switch over it.
      '@typescript-eslint/switch-exhaustiveness-check': ['error', { considerDefaultExhaustiveForUnions: true }],
    },
  },
  {
    // Tests build hostile and mutated scenario objects on purpose; `any` is how they say so.
    // Exact-format assertions write the spaces they expect.
    files: ['test/**/*.ts', 'packages/*/test/**/*.ts'],
    rules: {
      '@typescript-eslint/no-explicit-any': 'off',
      'no-regex-spaces': 'off',
    },
  },
);
