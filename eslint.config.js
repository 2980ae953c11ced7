// Lint rules for the whole repository, set up as typescript-eslint and eslint-plugin-vue document for flat configs;
// formatting is Prettier's (eslint-config-prettier switches off the rules it owns). Run with `npm run lint`.
import js from '@eslint/js'
import { defineConfig } from 'eslint/config'
import prettier from 'eslint-config-prettier'
import pluginVue from 'eslint-plugin-vue'
import globals from 'globals'
import tseslint from 'typescript-eslint'

export default defineConfig(
  { ignores: ['dist/**', 'node_modules/**', '.data/**', 'drizzle/**', 'test-results/**', 'tests/bench/out/**', 'components.d.ts', 'auto-imports.d.ts'] },
  js.configs.recommended,
  tseslint.configs.recommended,
  pluginVue.configs['flat/recommended'],
  {
    files: ['**/*.vue'],
    languageOptions: { parserOptions: { parser: tseslint.parser } },
  },
  {
    languageOptions: { ecmaVersion: 2023, sourceType: 'module', globals: { ...globals.browser, ...globals.node } },
  },
  {
    rules: {
      // TypeScript checks names itself; typescript-eslint advises switching this rule off for TypeScript code.
      'no-undef': 'off',
      // A leading underscore marks a value left out on purpose (e.g. `const { id: _id, ...rest } = row`).
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_', ignoreRestSiblings: true },
      ],
    },
  },
  {
    // Tests read JSON answers loosely on purpose; the schemas are checked by the routes' own contract tests.
    files: ['tests/**'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  prettier,
)
