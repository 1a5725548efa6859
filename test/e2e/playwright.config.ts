/**
 * Browser end-to-end tests: Debian's Chromium against the built app served by
 * `deflator serve` on 127.0.0.1 (the demo database, and a seeded 100-asset database for
 * the drawing benchmark). Screenshots go to test-output/screenshots/.
 */
import { defineConfig } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import path from 'node:path';
import { BENCH_PORT, DEMO_PORT } from './ports.js';

const root = path.resolve(import.meta.dirname, '../..');

function chromiumPath(): string {
  if (process.env.CHROMIUM_PATH) return process.env.CHROMIUM_PATH;
  try {
    return execFileSync('sh', ['-c', 'command -v chromium'], { encoding: 'utf8' }).trim() || '/usr/bin/chromium';
  } catch {
    return '/usr/bin/chromium';
  }
}

export default defineConfig({
  testDir: '.',
  testMatch: '*.spec.ts',
  outputDir: path.join(root, 'test-output', 'e2e-results'),
  timeout: 120_000,
  expect: { timeout: 20_000 },
  workers: 1,
  fullyParallel: false,
  reporter: [['list']],
  use: {
    baseURL: `http://127.0.0.1:${DEMO_PORT}/`,
    viewport: { width: 1440, height: 900 },
    launchOptions: {
      executablePath: chromiumPath(),
      args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    },
  },
  webServer: [
    {
      // the access key of each start goes to an owner-only file the specs read (fixtures.ts)
      command: `mkdir -p test-output/e2e && node dist/cli.js demo --db test-output/e2e/demo.db > test-output/e2e/demo.log && node dist/cli.js serve --db test-output/e2e/demo.db --port ${DEMO_PORT} --key-file test-output/e2e/demo-${DEMO_PORT}.key`,
      cwd: root,
      url: `http://127.0.0.1:${DEMO_PORT}/`,
      env: { DEFLATOR_HOME: path.join(root, 'test-output', 'e2e', 'home') },
      timeout: 120_000,
      reuseExistingServer: false,
      stdout: 'pipe',
    },
    {
      command: `node test/e2e/bench-server.mjs test-output/e2e/bench ${BENCH_PORT} test-output/e2e/bench-${BENCH_PORT}.key`,
      cwd: root,
      url: `http://127.0.0.1:${BENCH_PORT}/`,
      env: { DEFLATOR_HOME: path.join(root, 'test-output', 'e2e', 'bench-home') },
      timeout: 180_000,
      reuseExistingServer: false,
      stdout: 'pipe',
    },
  ],
});
