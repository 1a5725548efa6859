/**
 * The import preview through the dispatcher, on the real store and file policy: the first
 * rows as the import reads them (dates as stored, returns as decimals, codes as gaps), the
 * problem where the import itself stops (its line and column, the same message the import
 * gives), the project database byte for byte unchanged (the whole-file digest of
 * test/robustness/helpers.ts), an uploaded preview's copy removed and named as uploaded;
 * then importFile with the same options stores what the preview showed.
 */
import { existsSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Coverage, ImportPreview } from '../../../shared/bridge/types.js';
import { composeApp } from '../../../src-main/app/compose.js';
import { ImportFilePolicy } from '../../../src-main/app/files.js';
import { StoreProject } from '../../../src-main/app/project.js';
import { panelWording } from '../../../src-main/app/wording.js';
import { importReturns } from '../../../src-main/import/index.js';
import { databaseState } from '../../robustness/helpers.js';
import { rejection, seededStore, tempDir, write } from '../import/helpers.js';
import { fakeEngine } from './fakes.js';

async function app() {
  const dir = tempDir();
  const store = await seededStore(dir);
  const project = new StoreProject(store);
  const files = new ImportFilePolicy({ roots: [dir], incomingDir: path.join(dir, 'incoming') });
  const core = composeApp({ version: 'test', project: () => project, importer: () => project, engine: fakeEngine(), files });
  return { dir, store, core, dbFile: path.join(dir, 'test.db') };
}

const FILE = 'date,quay-a,quay-b\n200101,1.25,-99.99\n200102,0.50,0.25\n200103,x,0.10\n200104,0.40,0.30\n';

describe('previewImport', () => {
  it('shows the first rows as read, stops where the import stops, stores nothing', async () => {
    const a = await app();
    const file = write(a.dir, 'quays.csv', FILE);
    const before = databaseState(a.dbFile).digest;
    const r = await a.core.dispatcher.dispatch('previewImport', { source: { path: file }, kind: 'returns', options: { dateFormat: 'YYYYMM', percent: true, missing: '-99.99' }, rows: 3 });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const p = r.value as ImportPreview;
    expect(p.columns).toEqual([
      { name: 'date', role: 'date' },
      { name: 'quay-a', role: 'return' },
      { name: 'quay-b', role: 'return' },
    ]);
    expect(p.rows.map((x) => x.line)).toEqual([2, 3, 4]);
    expect(p.more).toBe(true);
    expect(p.rows[0].cells[0]).toEqual({ text: '200101', status: 'ok', read: '2001-01-31' });
    expect(p.rows[0].cells[1]).toMatchObject({ status: 'ok', read: String(1.25 / 100) });
    expect(p.rows[0].cells[2]).toMatchObject({ status: 'missing', note: 'a missing-value code: no value (a gap, not a zero)' });
    expect(p.rows[2].cells[1]).toMatchObject({ status: 'error', note: 'is not a number' });
    // the import's own refusal, at the cell the preview marks, in the panel's words
    const direct = await rejection(importReturns(a.store, file, { dateFormat: 'YYYYMM', units: 'percent', missing: ['-99.99'] }));
    expect(p.problem).toMatchObject({ code: 'INPUT_INVALID', line: 4, column: 2, message: panelWording(direct.message), hint: panelWording(direct.hint ?? '') });
    expect(databaseState(a.dbFile).digest, 'the preview stored nothing').toBe(before);
    a.store.close();
  });

  it('an upload is previewed under its own name and its copy removed; importFile with the same options stores what was shown', async () => {
    const a = await app();
    const text = FILE.replace('x', '0.20');
    const r = await a.core.dispatcher.dispatch('previewImport', { source: { name: 'quays.csv', text }, kind: 'returns', options: { dateFormat: 'YYYYMM', percent: true } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const p = r.value as ImportPreview;
    expect(p.file).toBe('quays.csv');
    // no codes named: -99.99 is refused, with the upload's own name in the message
    expect(p.problem?.message).toMatch(/^quays\.csv, line 2, column 3 \(quay-b\): -99\.99 is a code often used for a missing value/);
    const incoming = path.join(a.dir, 'incoming');
    expect(existsSync(incoming) ? readdirSync(incoming) : []).toEqual([]);
    const ok = await a.core.dispatcher.dispatch('previewImport', { source: { name: 'quays.csv', text }, kind: 'returns', options: { dateFormat: 'YYYYMM', percent: true, missing: '-99.99' } });
    expect(ok.ok && (ok.value as ImportPreview).problem).toBeFalsy();
    expect(ok.ok && (ok.value as ImportPreview).reads).toMatchObject({ names: ['quay-a', 'quay-b'], first: '2001-01-31', last: '2001-04-30', frequency: 'monthly' });
    const imp = await a.core.dispatcher.dispatch('importFile', { source: { name: 'quays.csv', text }, kind: 'returns', options: { dateFormat: 'YYYYMM', percent: true, missing: '-99.99' } });
    expect(imp).toMatchObject({ ok: true, value: { kind: 'returns', names: ['quay-a', 'quay-b'], rows: 7 } });
    const cov = await a.core.dispatcher.dispatch('coverage', {});
    expect(cov.ok && (cov.value as Coverage).assets.find((x) => x.name === 'quay-b')).toMatchObject({ source: 'returns', data: 'net returns (percent)', count: 3, first: '2001-02-28' });
    const h = await a.core.dispatcher.dispatch('history', { asset: 'quay-a' });
    expect(h).toMatchObject({ ok: true, value: { source: 'returns', price: [], indexLabel: 'total-return index', dates: ['2000-12-31', '2001-01-31', '2001-02-28', '2001-03-31', '2001-04-30'] } });
    a.store.close();
  });

  it('prices and series previews: roles, a decimal comma under a semicolon delimiter, and header problems', async () => {
    const a = await app();
    const prices = write(a.dir, 'p.csv', 'date;asset;price;note\n2021-01-29;kelp;10,5;x\n2021-02-26;kelp;-1;y\n');
    const r = await a.core.dispatcher.dispatch('previewImport', { source: { path: prices }, kind: 'prices', options: { delimiter: 'semicolon', decimal: 'comma' } });
    const p = (r.ok ? r.value : null) as ImportPreview;
    expect(p.columns.map((c) => c.role)).toEqual(['date', 'asset', 'price', 'unused']);
    expect(p.rows[0].cells[2]).toMatchObject({ status: 'ok', read: '10.5' });
    expect(p.rows[1].cells[2]).toMatchObject({ status: 'error', note: 'price -1 is not positive' });
    expect(p.problem).toMatchObject({ line: 3, column: 3 });
    const series = write(a.dir, 's.csv', 'date,gust\n2021-01,0.5\n');
    const s = await a.core.dispatcher.dispatch('previewImport', { source: { path: series }, kind: 'series', options: { percent: true } });
    const q = (s.ok ? s.value : null) as ImportPreview;
    expect(q.problem).toMatchObject({ line: 2, column: 1 });
    expect(q.problem?.hint).toMatch(/name that layout with dates YYYY-MM/);
    const semi = await a.core.dispatcher.dispatch('previewImport', { source: { path: prices }, kind: 'prices' });
    expect(semi.ok && (semi.value as ImportPreview).problem?.message).toMatch(/the header is one column separated by semicolons, not commas/);
    a.store.close();
  });

  it('a path outside the allowed folders is refused before anything is read', async () => {
    const a = await app();
    const r = await a.core.dispatcher.dispatch('previewImport', { source: { path: '/etc/hostname' }, kind: 'returns' });
    expect(r).toMatchObject({ ok: false });
    expect(r.ok ? null : r.error.code).toBe('FORBIDDEN');
    a.store.close();
  });
});
