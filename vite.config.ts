/// <reference types="vitest/config" />
import { defineConfig, type Plugin } from 'vite';
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

/** The faces every screen draws with (client/src/early.ts imports them): loaded with the page, not when a text first needs one. */
const firstScreenFonts = /^assets\/ibm-plex-(sans-latin-(400|500|600)|mono-latin-(400|500))-normal-[\w-]+\.woff2$/;

/**
 * Adds to the built index.html a `<link rel="preload">` for each of `firstScreenFonts`: otherwise
 * the browser finds a face only while laying out the first text that uses it, and draws the screen
 * again when it arrives.
 */
function preloadFonts(): Plugin {
  return {
    name: 'seisift-preload-fonts',
    apply: 'build',
    transformIndexHtml: {
      order: 'post',
      handler: (_html, ctx) =>
        Object.keys(ctx.bundle ?? {})
          .filter((file) => firstScreenFonts.test(file))
          .sort()
          .map((file) => ({ tag: 'link', attrs: { rel: 'preload', as: 'font', type: 'font/woff2', crossorigin: '', href: `/${file}` }, injectTo: 'head' as const })),
    },
  };
}

/**
 * Adds to the built index.html a `<link rel="modulepreload">` for the app's own chunk (main.tsx)
 * and every chunk it imports. The page's entry (early.ts) loads the app with a dynamic import, so
 * that the entry runs (and starts the first screen's requests) without waiting for the app's
 * libraries; these links have the browser fetch those libraries at once, alongside the entry, not
 * only once the entry has run.
 */
function preloadApp(): Plugin {
  return {
    name: 'seisift-preload-app',
    apply: 'build',
    transformIndexHtml: {
      order: 'post',
      handler: (_html, ctx) => {
        const bundle = ctx.bundle ?? {};
        const main = Object.values(bundle).find((c) => c.type === 'chunk' && c.facadeModuleId?.endsWith('/client/src/main.tsx'));
        if (!main || main.type !== 'chunk') throw new Error('seisift-preload-app: the build has no chunk for client/src/main.tsx');
        const files = new Set<string>();
        const visit = (file: string): void => {
          const chunk = bundle[file];
          if (files.has(file) || !chunk || chunk.type !== 'chunk' || chunk.isEntry) return;
          files.add(file);
          chunk.imports.forEach(visit);
        };
        visit(main.fileName);
        return [...files].map((file) => ({ tag: 'link', attrs: { rel: 'modulepreload', crossorigin: '', href: `/${file}` }, injectTo: 'head' as const }));
      },
    },
  };
}

/** Vite builds the React client rooted in client/; vitest runs every test under tests/. */
export default defineConfig({
  root: 'client',
  plugins: [react(), tailwindcss(), preloadFonts(), preloadApp()],
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
