/**
 * A file that changes while it is imported is refused, whichever importer reads it
 * (prices, series, returns all read through src-main/import/csv.ts): cut short (it used
 * to be stored as a prefix with exit 0, the last number cut: 10.0105 stored as 10.01),
 * grown by a broken or a valid row, rewritten in place with the same size, or replaced
 * by another file saved over it; the message names the change, not a symptom. The change is made from the import's own progress callback after its first 1 MiB
 * chunk, so the moment is exact; the database is unchanged each time (digest).
 */
import { appendFileSync, openSync, closeSync, renameSync, statSync, truncateSync, writeFileSync, writeSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { importPrices, importReturns, importSeries } from '../../src-main/import/index.js';
import { Store } from '../../src-main/store/store.js';
import { cleanTempDirs, databaseState, seedDatabase, stopwatch, tempDir } from './helpers.js';

let dir: string;
let db: string;
let done: () => number;
let tried = 0;
beforeAll(async () => {
  done = stopwatch('changing files');
  dir = tempDir();
  db = await seedDatabase(dir, 'changing.db');
});
afterAll(() => {
  console.log(`[robustness] changing files: ${tried} imports of files changed while read, each refused, database unchanged`);
  done();
  cleanTempDirs();
});

function monthEnd(k: number): string {
  return new Date(Date.UTC(1950 + Math.floor(k / 12), (k % 12) + 1, 0)).toISOString().slice(0, 10);
}

/** About 2.5 MB of monthly rows: more than two read chunks. */
function write(kind: 'prices' | 'series' | 'returns'): string {
  const lines: string[] = [kind === 'prices' ? 'date,asset,price' : kind === 'series' ? `date,${Array.from({ length: 40 }, (_, j) => `wave_${j}`).join(',')}` : `date,${Array.from({ length: 40 }, (_, j) => `tide-${j}`).join(',')}`];
  if (kind === 'prices') {
    for (let a = 0; a < 120; a++) for (let k = 0; k < 600; k++) lines.push(`${monthEnd(k)},ridge-${a},${(10 + a / 7 + k / 1000).toFixed(4)}`);
  } else {
    for (let k = 0; k < 900; k++) lines.push(`${monthEnd(k)},${Array.from({ length: 40 }, (_, j) => (((k * 7 + j * 3) % 19) / 1000 - 0.009).toFixed(6)).join(',')}`);
  }
  lines.push(kind === 'prices' ? `${monthEnd(600)},ridge-0,10.0105` : `${monthEnd(900)},${Array.from({ length: 40 }, () => '0.0105').join(',')}`);
  const file = path.join(dir, `${kind}-${tried}.csv`);
  writeFileSync(file, `${lines.join('\n')}\n`);
  return file;
}

const CHANGES: Record<string, (file: string) => void> = {
  'cut short in the last number': (f) => truncateSync(f, statSync(f).size - 3),
  'grown by a broken row': (f) => appendFileSync(f, 'extra\n'),
  'grown by a valid row': (f) => appendFileSync(f, f.includes('prices') ? `${monthEnd(700)},ridge-1,11.5\n` : `${monthEnd(950)},${Array.from({ length: 40 }, () => '0.001').join(',')}\n`),
  'rewritten in place, same size': (f) => {
    const fd = openSync(f, 'r+');
    writeSync(fd, '9', statSync(f).size - 2);
    closeSync(fd);
  },
  'replaced by another file saved over it': (f) => {
    writeFileSync(`${f}.new`, 'date,asset,price\n2001-01-31,other,1\n');
    renameSync(`${f}.new`, f);
  },
};

describe('a file that changes while it is imported', () => {
  for (const kind of ['prices', 'series', 'returns'] as const) {
    for (const [what, change] of Object.entries(CHANGES)) {
      it(`${kind}: ${what} -> refused, nothing stored`, async () => {
        const file = write(kind);
        tried++;
        const before = databaseState(db).digest;
        let changed = false;
        const onProgress = (read: number): void => {
          if (!changed && read > 0) {
            changed = true;
            change(file);
          }
        };
        const store = new Store(db);
        let err: { code?: string; message?: string } = {};
        try {
          if (kind === 'prices') await importPrices(store, file, { onProgress });
          else if (kind === 'series') await importSeries(store, file, { kind: 'factor', onProgress });
          else await importReturns(store, file, { onProgress });
        } catch (e) {
          err = e as typeof err;
        } finally {
          store.close();
        }
        expect(changed, 'the change happened during the read').toBe(true);
        expect(err.code, `${what}: ${err.message ?? 'accepted'}`).toBe('INPUT_INVALID');
        expect(err.message).toContain('changed while it was being imported');
        expect(databaseState(db).digest).toBe(before);
      }, 60_000);
    }
  }

  it('an unchanged file of the same size imports (the control)', async () => {
    const file = write('prices');
    const store = new Store(db);
    try {
      const r = await importPrices(store, file, { onProgress: () => {} });
      expect(r.status).toBe('imported');
      expect(r.rowsStored).toBe(120 * 600 + 1);
    } finally {
      store.close();
    }
  }, 60_000);
});
