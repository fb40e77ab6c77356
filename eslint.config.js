import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';
import { builtinModules } from 'node:module';
import { createNodeResolver, importX } from 'eslint-plugin-import-x';

/** Node built-ins, bare and with the node: prefix (lib/gmm imports none of them). */
const nodeBuiltins = [...builtinModules, ...builtinModules.map((m) => `node:${m}`)];

export default tseslint.config(
  { ignores: ['node_modules/**', 'dist/**', '.expo/**', 'data/**', 'drizzle/**', 'screenshots/**', 'test-results/**', '**/*.py'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports' }],
      'no-console': 'off',
    },
  },
  {
    // No import cycles anywhere (server/app.ts <-> server/routes/* was one; AppDeps lives in server/app-deps.ts).
    files: ['**/*.{ts,tsx,js,mjs}'],
    plugins: { 'import-x': importX },
    settings: {
      'import-x/resolver-next': [createNodeResolver({ extensions: ['.ts', '.tsx', '.js', '.mjs', '.json'] })],
      'import-x/extensions': ['.ts', '.tsx', '.js', '.mjs'],
      'import-x/parsers': { '@typescript-eslint/parser': ['.ts', '.tsx'] },
    },
    rules: { 'import-x/no-cycle': ['error', { ignoreExternal: true }] },
  },
  {
    // lib/gmm stays pure: no server, app, components, hooks or api code and no Node built-ins.
    files: ['lib/gmm/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: nodeBuiltins.map((name) => ({ name, message: 'lib/gmm is pure: no Node built-ins (no I/O).' })),
          patterns: [
            {
              group: ['**/server/**', '**/server', '**/app/**', '**/components/**', '**/hooks/**', '**/api/**', 'express', 'react', 'react-native'],
              message: 'lib/gmm is pure: it imports no server, app, UI or client code.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['**/*.cjs'],
    languageOptions: { sourceType: 'commonjs' },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
);
