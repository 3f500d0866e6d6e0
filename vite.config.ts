/// <reference types="vitest/config" />
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';
import { fileURLToPath } from 'node:url';

const apiPort = Number(process.env.API_PORT ?? 3001);

export default defineConfig({
  plugins: [react(), tailwindcss()],
  // the client lives in src/ (index.html, public/); the build goes to dist/ at the top
  root: 'src',
  // the client reaches server code only through this alias, and only the pure science (no Node, no I/O)
  resolve: { alias: { '@science': fileURLToPath(new URL('./server/science', import.meta.url)) } },
  build: { outDir: '../dist', emptyOutDir: true },
  server: {
    port: Number(process.env.PORT ?? 5173),
    proxy: { '/api': { target: `http://127.0.0.1:${apiPort}`, changeOrigin: false } },
  },
  test: {
    // tests live at the top, outside the client root
    root: process.cwd(),
    include: ['tests/**/*.test.ts'],
    environment: 'node',
    setupFiles: ['tests/helpers/setup.ts'],
    // sized for a loaded 2-core machine; browser tests raise their own (tests/helpers/browser.ts)
    testTimeout: 60_000,
    hookTimeout: 180_000,
    pool: 'forks',
    fileParallelism: true,
  },
});
