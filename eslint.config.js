// ESLint 9 flat config: type-aware typescript-eslint, the hooks rules for the client, and the
// import boundaries of docs/architecture.md (eslint-plugin-import-x `no-restricted-paths`, with
// the TypeScript resolver so the @server/@shared/@client/@tests aliases resolve). `npm test` runs
// it (with `tsc --noEmit`) before the tests and stops on any error.
import js from '@eslint/js';
import { createTypeScriptImportResolver } from 'eslint-import-resolver-typescript';
import importX from 'eslint-plugin-import-x';
import reactHooks from 'eslint-plugin-react-hooks';
import tseslint from 'typescript-eslint';

/**
 * The server's features, and the files of each that other features (and the jobs) may import: its
 * published services. Everything else in a feature folder is its own business.
 */
const features = {
  accounts: [],
  audit: ['audit.ts'],
  events: ['candidate-events.ts', 'event-service.ts'],
  health: [],
  ingest: [],
  queue: ['presenters.ts', 'queue-rows.ts', 'queue-traces.ts', 'queue-transitions.ts'],
  similarity: ['item-matches.ts', 'resemblance.ts', 'settings.ts', 'template-store.ts', 'window-matching.ts'],
  stations: ['station-registry.ts', 'station-baseline.ts'],
  supervision: ['escalations.ts'],
};
const publicFilesOf = (except) =>
  Object.entries(features)
    .filter(([name]) => name !== except)
    .flatMap(([name, files]) => files.map((f) => `./${name}/${f}`));

/**
 * The kernel: what features build on. It never imports a feature. (The composition root —
 * server/index.ts, app.ts, context.ts — and the periodic jobs wire features together.)
 */
const kernel = ['server/db', 'server/realtime', 'server/auth', 'server/policies', 'server/http', 'server/email', 'server/errors.ts', 'server/env.ts', 'server/logger.ts', 'server/version.ts'];
/** Pure code: numbers in, numbers out. */
const pure = ['server/dsp', 'server/formats', 'server/seismo'];

const boundaryZones = [
  { target: 'client', from: ['server', 'tests'], message: 'The client never imports server code (shared/ holds what both sides use).' },
  { target: 'shared', from: ['server', 'client', 'tests'], message: 'shared/ imports neither the server nor the client.' },
  { target: 'server', from: ['client'], message: 'The server never imports client code.' },
  ...pure.map((dir) => ({
    target: dir,
    from: ['server', 'tests'],
    except: pure.map((p) => `./${p.slice('server/'.length)}`),
    message: 'dsp/, seismo/ and formats/ are pure: they import only each other and shared/.',
  })),
  { target: kernel, from: ['server/features'], message: 'The kernel never imports a feature; the feature calls the kernel.' },
  ...Object.keys(features).map((name) => ({
    target: `server/features/${name}`,
    from: ['server/features'],
    except: [`./${name}`, ...publicFilesOf(name)],
    message: `A feature uses another feature only through its published services (eslint.config.js \`features\`, and the feature's README).`,
  })),
  { target: 'server/jobs', from: ['server/features'], except: publicFilesOf(null), message: 'Jobs call a feature through its published services.' },
];

/** Node built-ins and server libraries that pure code must not reach for. */
const impureModules = ['node:*', 'express', 'ws', 'mysql2', 'mysql2/*', 'drizzle-orm', 'drizzle-orm/*', 'pino', 'piscina'];

export default tseslint.config(
  { linterOptions: { reportUnusedDisableDirectives: 'error' } },
  { ignores: ['dist/**', 'node_modules/**', '.data/**', 'demo-waveforms/**', 'migrations/**', 'coverage/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommendedTypeChecked,
  {
    languageOptions: {
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
    },
    plugins: { 'import-x': importX },
    settings: {
      'import-x/resolver-next': [createTypeScriptImportResolver({ project: './tsconfig.json' })],
    },
    rules: {
      '@typescript-eslint/no-explicit-any': 'error',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
      // Express 5 forwards a rejected handler to the error handler, so async route handlers are fine.
      '@typescript-eslint/no-misused-promises': ['error', { checksVoidReturn: { arguments: false, attributes: false } }],
      'import-x/no-restricted-paths': ['error', { basePath: import.meta.dirname, zones: boundaryZones }],
      'import-x/no-cycle': ['error', { ignoreExternal: true }],
      // Async functions without an await are how a synchronous step meets a Promise-returning
      // interface (cleanup lists, close()); the rule would only make them noisier.
      '@typescript-eslint/require-await': 'off',
      'no-restricted-imports': ['error', { patterns: [{ group: ['../../*'], message: 'Use a path alias (@server/, @shared/, @client/, @tests/) instead of climbing two folders.' }] }],
    },
  },
  {
    files: pure.map((dir) => `${dir}/**/*.ts`),
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: impureModules, message: 'Pure code has no I/O, no server libraries and no Node built-ins.' }] }],
    },
  },
  {
    // The rules of hooks and complete dependency lists. The plugin's React Compiler diagnostics
    // (refs, set-state-in-effect, incompatible-library…) judge code for a compiler the build does
    // not run, so they are not switched on.
    files: ['client/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: { 'react-hooks/rules-of-hooks': 'error', 'react-hooks/exhaustive-deps': 'error' },
  },
  {
    // Tests read response bodies typed `any` by supertest and Playwright, pass bound-free methods
    // to the fakes they build and stringify socket frames; the product code keeps these rules.
    files: ['tests/**/*.{ts,tsx}'],
    rules: {
      '@typescript-eslint/no-unsafe-member-access': 'off',
      '@typescript-eslint/no-unsafe-assignment': 'off',
      '@typescript-eslint/no-unsafe-call': 'off',
      '@typescript-eslint/no-unsafe-argument': 'off',
      '@typescript-eslint/no-unsafe-return': 'off',
      '@typescript-eslint/unbound-method': 'off',
      '@typescript-eslint/no-base-to-string': 'off',
      '@typescript-eslint/no-implied-eval': 'off',
    },
  },
  {
    files: ['**/*.{js,mjs,cjs}'],
    ...tseslint.configs.disableTypeChecked,
    languageOptions: { ...tseslint.configs.disableTypeChecked.languageOptions, globals: { process: 'readonly', console: 'readonly' } },
  },
);
