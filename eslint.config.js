// eslint (flat config): typescript-eslint's and the svelte plugin's recommended rules, and no
// source file over 500 lines, no .svelte file over 250. The dependency direction (src/core pure;
// the dashboard and the named queries free of Node-only code) is checked by
// tests/layout/dependency-direction.test.ts, which resolves each import.
import js from '@eslint/js';
import svelte from 'eslint-plugin-svelte';
import tseslint from 'typescript-eslint';

const unused = ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }];

export default tseslint.config(
  { ignores: ['dist/', 'node_modules/', 'tests/.tmp/', 'test-output/', 'bench-results/', 'demo-cohort/recordings/', 'demo-cohort/results/'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  ...svelte.configs['flat/recommended'],
  {
    languageOptions: { globals: { console: 'readonly', process: 'readonly', URL: 'readonly', performance: 'readonly' } },
    rules: {
      '@typescript-eslint/no-unused-vars': unused,
      // DOM, worker and Node globals are type-checked by tsc and svelte-check
      'no-undef': 'off',
    },
  },
  {
    files: ['**/*.svelte', '**/*.svelte.ts'],
    languageOptions: { parserOptions: { parser: tseslint.parser, extraFileExtensions: ['.svelte'] } },
  },
  {
    // tests read untyped rows from DuckDB and JSON
    files: ['tests/**/*.ts'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  {
    files: ['src/**/*.ts', 'ingest/**/*.ts'],
    ignores: ['**/*.svelte.ts'],
    rules: { 'max-lines': ['error', { max: 500 }] },
  },
  {
    files: ['src/**/*.svelte'],
    rules: { 'max-lines': ['error', { max: 250 }] },
  },
);
