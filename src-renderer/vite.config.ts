// Builds the renderer (Vue 3 + Pinia + ECharts) into dist/renderer, with relative asset
// paths so the same files load from the Electron app protocol and the loopback server.
import { defineConfig } from 'vite';
import vue from '@vitejs/plugin-vue';
import path from 'node:path';

const here = import.meta.dirname;

export default defineConfig({
  root: here,
  base: './',
  plugins: [vue()],
  build: {
    outDir: path.resolve(here, '../dist/renderer'),
    emptyOutDir: true,
    chunkSizeWarningLimit: 1500,
    sourcemap: false,
    target: 'es2022',
  },
  server: { host: '127.0.0.1' },
});
