// @ts-check
// ESLint for the whole repo: typescript-eslint's recommended rules everywhere, Angular's
// rules and template checks (with accessibility) for the client. Formatting is Prettier's
// (.prettierrc.json); `npm run lint` runs this with --max-warnings 0.
import eslint from '@eslint/js';
import stylistic from '@stylistic/eslint-plugin';
import angular from 'angular-eslint';
import { defineConfig, globalIgnores } from 'eslint/config';
import globals from 'globals';
import tseslint from 'typescript-eslint';

export default defineConfig(
  globalIgnores([
    'dist/',
    '.angular/',
    'out-tsc/',
    'test-output/',
    'coverage/',
    '.data/',
    'migrations/',
    // AssemblyScript, not TypeScript: decorators on functions, its own number types.
    'wasm/',
  ]),
  {
    files: ['**/*.ts', '**/*.js', '**/*.mjs'],
    extends: [eslint.configs.recommended, tseslint.configs.recommended],
    plugins: { '@stylistic': stylistic },
    languageOptions: { globals: { ...globals.node } },
    linterOptions: { reportUnusedDisableDirectives: 'error' },
    rules: {
      // Prettier owns the length of code lines (printWidth 160); this catches the comments it does not wrap.
      '@stylistic/max-len': ['error', { code: 1000, comments: 160, ignoreUrls: true }],
      // `_name` marks a value taken apart only to leave it out (`const { server: _server, ...others } = errors`).
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_', ignoreRestSiblings: true },
      ],
    },
  },
  {
    files: ['src/**/*.ts'],
    extends: [angular.configs.tsRecommended],
    processor: angular.processInlineTemplates,
    languageOptions: { globals: { ...globals.browser } },
    rules: {
      '@angular-eslint/component-selector': ['error', { type: 'element', prefix: 'pw', style: 'kebab-case' }],
      '@angular-eslint/directive-selector': ['error', { type: 'attribute', prefix: 'pw', style: 'camelCase' }],
    },
  },
  {
    files: ['src/**/*.html'],
    extends: [angular.configs.templateRecommended, angular.configs.templateAccessibility],
    rules: {
      // `x != null` (null or undefined) is the house idiom, in templates as in TypeScript.
      '@angular-eslint/template/eqeqeq': ['error', { allowNullOrUndefined: true }],
    },
  },
);
