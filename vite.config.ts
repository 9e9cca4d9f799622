/// <reference types="vitest/config" />
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';
import { fileURLToPath } from 'node:url';

const apiPort = process.env.PORT ?? '3000';
const here = (dir: string) => fileURLToPath(new URL(dir, import.meta.url));

/** The path aliases of tsconfig.json ("paths"), for the client build and for vitest. */
export const pathAliases = {
  '@server': here('./server'),
  '@shared': here('./shared'),
  '@client': here('./client/src'),
  '@tests': here('./tests'),
};

/** Vite builds the React client rooted in client/; vitest runs every test under tests/. */
export default defineConfig({
  root: 'client',
  plugins: [react(), tailwindcss()],
  resolve: { alias: pathAliases },
  build: { outDir: '../dist/client', emptyOutDir: true },
  server: {
    proxy: {
      '/api': `http://127.0.0.1:${apiPort}`,
      '/ws': { target: `ws://127.0.0.1:${apiPort}`, ws: true },
    },
  },
  test: {
    root: '.',
    include: ['tests/**/*.test.ts', 'tests/**/*.test.tsx'],
    testTimeout: 30_000,
    hookTimeout: 120_000,
    pool: 'forks',
    globalSetup: ['tests/setup/global-setup.ts'],
  },
});
