// ESLint flat config. Besides the usual TypeScript and React hooks checks it holds the layering the
// contributor guide describes ("Layering" in DEVELOPERS.md), so a wrong import fails `npm run lint`:
//   - the client (src/) never imports the server (server/);
//   - the decoder (shared/decoder/) imports nothing from Node, the DOM, the client or the server;
//   - from outside, the decoder is imported only through its entry points (DECODER_ENTRIES);
//   - features (src/features/<feature>/) do not import each other: shared pieces live in
//     src/components or src/lib;
//   - no import cycles.
// No type-aware rules: they would need the whole program and make lint slow; tsc checks types.
import fs from 'node:fs';
import js from '@eslint/js';
import { createTypeScriptImportResolver } from 'eslint-import-resolver-typescript';
import { importX } from 'eslint-plugin-import-x';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';
import tseslint from 'typescript-eslint';

/** The decoder's public entry points, relative to shared/decoder: the index and its documented sub-entries. */
const DECODER_ENTRIES = ['index.ts', 'calls/index.ts', 'encode/index.ts', 'faults/index.ts', 'finder/index.ts', 'hints/index.ts', 'readers/index.ts', 'timing/index.ts'];

const FEATURES = fs.readdirSync('src/features', { withFileTypes: true }).filter((d) => d.isDirectory()).map((d) => d.name);

/** Globals of a browser or of Node that the decoder must not touch (it runs in both, and in a worker). */
const HOST_GLOBALS = ['window', 'document', 'navigator', 'location', 'localStorage', 'sessionStorage', 'fetch', 'XMLHttpRequest', 'self', 'process', 'Buffer', 'require', 'module', '__dirname', '__filename', 'global', 'setImmediate'];

export default tseslint.config(
  { ignores: ['dist/', 'coverage/', 'bench-out/', 'test-artifacts/', 'data/', '.vite/', '.stryker-tmp/', 'public/'] },
  js.configs.recommended,
  tseslint.configs.recommended,
  {
    plugins: { 'import-x': importX },
    languageOptions: { ecmaVersion: 2023, sourceType: 'module', globals: { ...globals.node } },
    settings: {
      'import-x/resolver-next': [createTypeScriptImportResolver({ project: './tsconfig.json' })],
      'import-x/extensions': ['.ts', '.tsx', '.js', '.mjs'],
    },
    rules: {
      // unused names fail tsc's noUnusedParameters-like review; an underscore marks one kept on purpose
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true }],
      // declaration merging (Express.User extends the API's User) needs an empty interface
      '@typescript-eslint/no-empty-object-type': ['error', { allowInterfaces: 'with-single-extends' }],
      'import-x/no-cycle': ['error', { ignoreExternal: true }],
      'import-x/no-self-import': 'error',
      'import-x/no-restricted-paths': [
        'error',
        {
          zones: [
            { target: './src', from: './server', message: 'The client talks to the server over HTTP only (src/lib/api.ts); shared types live in shared/.' },
            { target: './shared', from: './server', message: 'shared/ is used by client and server alike.' },
            { target: ['./server/runs', './server/jobs'], from: './server/services', message: 'A decode run (runs/, jobs/) does not depend on the request services: move what both need into runs/ or db/.' },
            { target: './shared', from: './src', message: 'shared/ is used by client and server alike.' },
            {
              // tests/decoder are the decoder's own unit tests and may reach its parts; everyone else uses the entry points
              target: ['./src', './server', './tests/api', './tests/browser', './shared/schemas', './bench'],
              from: './shared/decoder',
              except: DECODER_ENTRIES.map((e) => `./${e}`),
              message: `Import the decoder through its entry points: shared/decoder or shared/decoder/{${DECODER_ENTRIES.filter((e) => e !== 'index.ts').map((e) => e.replace('/index.ts', '')).join(',')}}.`,
            },
            ...FEATURES.map((feature) => ({
              target: `./src/features/${feature}`,
              from: './src/features',
              except: [`./${feature}`],
              message: 'Features do not import each other: move what both need to src/components or src/lib.',
            })),
          ],
        },
      ],
    },
  },
  {
    // the decoder is pure TypeScript: the same code runs in the browser, the worker, the server and the CLI
    files: ['shared/decoder/**'],
    languageOptions: { globals: {} },
    rules: {
      'import-x/no-nodejs-modules': 'error',
      'no-restricted-globals': ['error', ...HOST_GLOBALS.map((name) => ({ name, message: 'The decoder runs in the browser and in Node alike: pass what it needs in.' }))],
    },
  },
  {
    files: ['src/**/*.{ts,tsx}'],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { 'react-hooks': reactHooks },
    rules: {
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'warn',
    },
  },
  {
    files: ['tests/browser/**'],
    // functions sent to page.evaluate run in the page
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
  },
);
