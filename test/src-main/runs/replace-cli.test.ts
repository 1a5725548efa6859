/**
 * A corrected file brought in end to end through the built CLI (node dist/cli.js, built
 * by the test setup with scripts/build.mjs): `import prices --replace` and `import remove`
 * make the runs recorded on the old data stale, and their replay reports the panel
 * fingerprint mismatch and exits 4. The demo market's files (sample-data/monthly) are
 * copied and edited in a temporary folder.
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { Store } from '../../../src-main/store/store.js';
import { SAMPLE, editPrice } from './helpers.js';

const ROOT = path.resolve(import.meta.dirname, '../../..');
const CLI = path.join(ROOT, 'dist/cli.js');
const SPEC = path.join(ROOT, 'sample-data/specs/linear-second.json');
const cli = (args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
};
const ok = (args: string[]) => {
  const r = cli(args);
  expect(r.code, `${args.join(' ')}\n${r.out}\n${r.err}`).toBe(0);
  return r;
};

/** A project whose prices come in two files: up to 2023, and 2024 (so removing the second leaves a shorter panel). */
function project(): { dir: string; db: string; early: string; late: string } {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-replace-'));
  const db = path.join(dir, 'project.db');
  const [header, ...rows] = readFileSync(path.join(SAMPLE, 'prices.csv'), 'utf8').trimEnd().split('\n');
  const early = path.join(dir, 'prices.csv');
  const late = path.join(dir, 'prices_2024.csv');
  writeFileSync(early, `${[header, ...rows.filter((r) => r < '2024')].join('\n')}\n`);
  writeFileSync(late, `${[header, ...rows.filter((r) => r >= '2024')].join('\n')}\n`);
  for (const f of ['factors.csv', 'bill_yield.csv']) copyFileSync(path.join(SAMPLE, f), path.join(dir, f));
  ok(['import', 'prices', early, '--db', db]);
  ok(['import', 'prices', late, '--db', db]);
  ok(['import', 'series', path.join(dir, 'factors.csv'), '--db', db, '--kind', 'factor']);
  ok(['import', 'series', path.join(dir, 'bill_yield.csv'), '--db', db, '--kind', 'riskfree', '--units', 'percent', '--rf-form', 'yield-annual']);
  expect(ok(['fit', SPEC, '--db', db]).out).toContain('Recorded as run 1');
  expect(ok(['replay', '1', '--db', db]).out.trim().endsWith('REPLAY OK')).toBe(true);
  return { dir, db, early, late };
}

function expectStaleReplay(db: string, what: string): void {
  const list = ok(['runs', '--db', db]);
  expect(list.out).toMatch(/\n\s*1\s+fit\s.*STALE/);
  expect(list.out).toContain(what);
  const r = cli(['replay', '1', '--db', db]);
  expect(r.code, r.out).toBe(4);
  expect(r.out).toContain('STALE: the data this run read has changed');
  expect(r.out).toContain('panel: fingerprint MISMATCH');
  expect(r.out.trim().endsWith('REPLAY MISMATCH')).toBe(true);
}

describe('a corrected file through the CLI', () => {
  it('import prices --replace: the clash is refused without it, replaced with it; the recorded run is stale and its replay exits 4', () => {
    const p = project();
    editPrice(p.early, 'corvane-saltworks', '2010-06-30', 1.01);
    const refused = cli(['import', 'prices', p.early, '--db', p.db]);
    expect(refused.code).toBe(1);
    expect(refused.err).toContain('--replace');
    expect(refused.err).toContain('deflator import remove 1 --db DB');
    const r = ok(['import', 'prices', p.early, '--db', p.db, '--replace', '--json']);
    const report = JSON.parse(r.out) as { status: string; replaced: { importId: number; rows: number; removed: boolean }[] };
    expect(report.status).toBe('imported');
    expect(report.replaced).toEqual([{ importId: 1, fileName: 'prices.csv', rows: report.replaced[0].rows, removed: true }]);
    const store = new Store(p.db, { mustExist: true, readonly: true });
    try {
      const h = store.loadHistories(['corvane-saltworks'])[0];
      const line = readFileSync(p.early, 'utf8').split('\n').find((l) => l.startsWith('2010-06-30,corvane-saltworks,'))!;
      // ECMA-262 Number(string): the stored double is the file's text, correctly rounded
      expect(Object.is(h.price[h.dates.indexOf('2010-06-30')], Number(line.split(',')[2]))).toBe(true);
    } finally {
      store.close();
    }
    expectStaleReplay(p.db, 'asset corvane-saltworks: stored rows changed since the run');
  });

  it('import remove: prints rows, subjects and the runs it made stale; replay then exits 4; an unknown id changes nothing', () => {
    const p = project();
    const store = new Store(p.db, { mustExist: true, readonly: true });
    const before = store.contentDigest();
    store.close();
    const bad = cli(['import', 'remove', '9', '--db', p.db]);
    expect(bad.code).toBe(1);
    expect(bad.err).toContain('import 9 is not in the import log');
    expect(bad.err).toContain('deflator info --db DB');
    const again = new Store(p.db, { mustExist: true, readonly: true });
    expect(again.contentDigest()).toBe(before);
    again.close();
    const r = ok(['import', 'remove', '2', '--db', p.db]);
    expect(r.out).toMatch(/^removed import 2 \(prices_2024\.csv, prices, imported [^)]+\): 360 price observations deleted/);
    expect(r.out).toContain('\n  30 assets touched: ashcombe-lamps, brackenholt-rail, ');
    expect(r.out).toContain('recorded runs now stale (their data changed): 1 (three-factor SDF, second stage)');
    expectStaleReplay(p.db, 'file prices_2024.csv');
    // the same bytes can come in again: the data are as they were when the run was recorded, so it is not stale
    ok(['import', 'prices', p.late, '--db', p.db]);
    const replay = ok(['replay', '1', '--db', p.db]).out;
    expect(replay).toContain('data: every recorded file and subject digest matches the store');
    expect(replay.trim().endsWith('REPLAY OK')).toBe(true);
  });
});
