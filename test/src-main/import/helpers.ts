/** Test helpers: temp folders, files written by hand, a store with some rows already in it. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterEach } from 'vitest';
import { isDeflatorError } from '../../../shared/errors.js';
import { Store } from '../../../src-main/store/store.js';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

export function tempDir(): string {
  const d = mkdtempSync(path.join(tmpdir(), 'deflator-test-'));
  dirs.push(d);
  return d;
}

/** Writes a file (text, or raw bytes) into dir and returns its path. */
export function write(dir: string, name: string, content: string | Uint8Array): string {
  const file = path.join(dir, name);
  writeFileSync(file, content);
  return file;
}

/** The error a promise rejects with (fails the test if it resolves). */
export async function rejection(p: Promise<unknown>): Promise<Error & { code?: string; hint?: string }> {
  try {
    await p;
  } catch (e) {
    if (!isDeflatorError(e)) throw e;
    return e as Error & { code?: string };
  }
  throw new Error('expected the import to fail, but it succeeded');
}

export const BASE_PRICES = 'date,asset,price,dividend\n2020-01-31,alpha,10,\n2020-02-28,alpha,11,0.5\n2020-03-31,alpha,12,\n2020-01-31,beta,20,\n2020-02-28,beta,21,\n';

/** A file store holding one earlier import, so "unchanged" is checked against real rows. */
export async function seededStore(dir: string): Promise<Store> {
  const { importPrices } = await import('../../../src-main/import/index.js');
  const store = new Store(path.join(dir, 'test.db'));
  await importPrices(store, write(dir, 'base.csv', BASE_PRICES));
  return store;
}
