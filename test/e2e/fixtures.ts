/**
 * The Playwright `test` every browser spec imports: the same as @playwright/test's, with
 * each page given the access keys of the two end-to-end servers (written by `deflator
 * serve --key-file`, see playwright.config.ts) in sessionStorage before any page script
 * runs, the way the app keeps the key from the printed address. A spec that imports
 * `test` from @playwright/test directly gets 401 on every call.
 */
import { test as base } from '@playwright/test';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { BENCH_PORT, DEMO_PORT } from './ports.js';

export { expect } from '@playwright/test';

const root = path.resolve(import.meta.dirname, '../..');
export const KEY_FILES = {
  demo: path.join(root, 'test-output', 'e2e', `demo-${DEMO_PORT}.key`),
  bench: path.join(root, 'test-output', 'e2e', `bench-${BENCH_PORT}.key`),
};

/** The printed address (with `#key=`) of an end-to-end server, from its key file. */
export function serverAddress(which: keyof typeof KEY_FILES): string {
  return readFileSync(KEY_FILES[which], 'utf8').trim();
}

export function serverKey(which: keyof typeof KEY_FILES): string {
  return new URL(serverAddress(which)).hash.replace(/^#key=/, '');
}

export const test = base.extend({
  context: async ({ context }, use) => {
    const keys: Record<string, string> = { [String(DEMO_PORT)]: serverKey('demo') };
    try {
      keys[String(BENCH_PORT)] = serverKey('bench');
    } catch {
      // the bench server is not running in this invocation
    }
    await context.addInitScript((byPort: Record<string, string>) => {
      const k = byPort[location.port];
      if (k && !sessionStorage.getItem('deflator.key')) sessionStorage.setItem('deflator.key', k);
    }, keys);
    await use(context);
  },
});
