import { svelte } from '@sveltejs/vite-plugin-svelte';
import { svelteTesting } from '@testing-library/svelte/vite';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const repo = fileURLToPath(new URL('.', import.meta.url));

export default defineConfig({
  // The dashboard app: `vite build` writes dist/dashboard/ with relative asset paths.
  root: `${repo}src/dashboard`,
  base: './',
  // keep Vite's cache at the repo's node_modules, not under src/dashboard
  cacheDir: `${repo}node_modules/.vite`,
  // No SPA fallback: unknown paths (such as DuckDB's .duckdb.wal probe) must get 404 (STACK.md).
  appType: 'mpa',
  plugins: [svelte({ configFile: false })],
  build: {
    outDir: `${repo}dist/dashboard`,
    emptyOutDir: true,
    target: 'es2022',
    chunkSizeWarningLimit: 2000,
  },
  test: {
    // tests live at the repo root, whatever the app's root is
    root: repo,
    testTimeout: 120_000,
    hookTimeout: 300_000,
    pool: 'forks',
    projects: [
      {
        extends: true,
        test: {
          name: 'node',
          include: ['tests/**/*.test.ts'],
          exclude: ['tests/**/*.dom.test.ts', '**/node_modules/**'],
          environment: 'node',
        },
      },
      {
        // Svelte component tests in a DOM; svelteTesting() makes Svelte resolve to its browser build.
        extends: true,
        plugins: [svelteTesting()],
        test: {
          name: 'dom',
          include: ['tests/**/*.dom.test.ts'],
          environment: 'happy-dom',
        },
      },
    ],
  },
});
