/// <reference types="vitest/config" />
import { defineConfig } from 'vite';
import { pathAliases } from './vite.config';

/**
 * `npm run test:cluster`: the multi-instance mode on loopback (issue 20): MariaDB (the run's
 * throw-away one, tests/setup/global-setup.ts), a private Redis, two app instances and two
 * analysis workers as child processes. Not part of `npm test` (its files end in .cluster.ts).
 */
export default defineConfig({
  resolve: { alias: pathAliases },
  test: {
    root: '.',
    include: ['tests/cluster/**/*.cluster.ts'],
    testTimeout: 120_000,
    hookTimeout: 240_000,
    pool: 'forks',
    fileParallelism: false,
    globalSetup: ['tests/setup/global-setup.ts'],
  },
});
