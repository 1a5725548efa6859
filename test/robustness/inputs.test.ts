/**
 * Inputs at the edges: dates that are not calendar dates (2010-02-30, 2010-13-01) in
 * specs, portfolio options, the runs filter and `runs --from`; spec files saved with a
 * UTF-8 byte-order mark (RFC 3629 section 6 permits one; editors on some systems write it);
 * upload names up to the 255 characters the bridge accepts; paths outside the allowed
 * folders (answered FORBIDDEN before the file system is asked, so the answer does not tell
 * whether they exist); request bodies that arrive too slowly; thread counts beyond the
 * machine. Each used to be accepted, or answered with an internal error, or revealed
 * something (see README, Robustness).
 */
import http from 'node:http';
import { mkdirSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseSortSpec } from '../../shared/portfolios/spec.js';
import { validateRequest } from '../../shared/bridge/validate.js';
import { parseCompareSpec, parseFitSpec } from '../../shared/spec.js';
import { composeApp } from '../../src-main/app/compose.js';
import { ImportFilePolicy } from '../../src-main/app/files.js';
import { threadsFlag } from '../../src-main/cli/compute.js';
import { startServer } from '../../src-main/server/http.js';
import { fakeEngine, fakeImporter, fakeProject, openPolicy } from '../src-main/app/fakes.js';
import type { Project } from '../src-main/runs/helpers.js';
import { cleanTempDirs, tempDir, cli, codeOf, projectWithRun } from './helpers.js';

let p: Project;
beforeAll(async () => {
  p = await projectWithRun();
}, 60_000);
afterAll(() => {
  p?.store.close();
  cleanTempDirs();
});

const NOT_DATES = ['2010-02-30', '2010-13-01', '2010-00-10', '2010-04-31', '2011-02-29', '1900-02-29', '0000-01-01', '2010-1-01', '2010-01-01T00:00'];

describe('dates are calendar dates everywhere', () => {
  it('spec start and end, comparison specs, portfolio options and the runs filter refuse them; real dates pass', () => {
    for (const d of NOT_DATES) {
      expect(codeOf(() => parseFitSpec({ start: d, riskfree: 'rf', model: { factors: ['f'] } })), `start ${d}`).toBe('SPEC_INVALID');
      expect(codeOf(() => parseCompareSpec({ end: d, riskfree: 'rf', compare: [{ model: { factors: ['f'] } }] })), `end ${d}`).toBe('SPEC_INVALID');
      expect(codeOf(() => parseSortSpec({ characteristic: 'momentum', name: 'mom', start: d })), `portfolio start ${d}`).toBe('SPEC_INVALID');
      expect(validateRequest('runs', { from: d }).ok, `runs from ${d}`).toBe(false);
    }
    for (const d of ['2012-02-29', '2000-02-29', '2010-12-31']) {
      expect(parseFitSpec({ start: d, riskfree: 'rf', model: { factors: ['f'] } }).start).toBe(d);
      expect(validateRequest('runs', { to: d }).ok).toBe(true);
    }
    const e = (() => {
      try {
        parseFitSpec({ start: '2010-02-30', riskfree: 'rf', model: { factors: ['f'] } });
      } catch (x) {
        return (x as Error).message;
      }
    })();
    expect(e).toContain('spec.start: expected a calendar date as YYYY-MM-DD');
  });

  it('`runs --from` and `--to` refuse them with a message naming the flag', () => {
    for (const d of ['2010-02-30', '2010-13-01']) {
      for (const flag of ['--from', '--to']) {
        const r = cli(['runs', '--db', p.dbPath, flag, d]);
        expect(r.code, `${flag} ${d}`).toBe(1);
        expect(r.err).toContain(`${flag} ${d}: expected a calendar date as YYYY-MM-DD`);
      }
    }
    expect(cli(['runs', '--db', p.dbPath, '--from', '2012-02-29']).code).toBe(0);
  });
});

describe('spec files with a UTF-8 byte-order mark', () => {
  it('fit and compare read them like files without one', () => {
    const fitSpec = path.join(p.dir, 'bom-fit.json');
    writeFileSync(fitSpec, `\uFEFF${JSON.stringify({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks'], model: { factors: ['harbor'] } })}`);
    expect(readFileSync(fitSpec).subarray(0, 3)).toEqual(Buffer.from([0xef, 0xbb, 0xbf]));
    const r = cli(['fit', fitSpec, '--db', p.dbPath, '--no-record', '--json']);
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).kind).toBe('fit');
    const cmpSpec = path.join(p.dir, 'bom-compare.json');
    writeFileSync(cmpSpec, `\uFEFF${JSON.stringify({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks'], compare: [{ model: { factors: ['harbor'] } }] })}`);
    const c = cli(['compare', cmpSpec, '--db', p.dbPath, '--no-record', '--json']);
    expect(c.code, c.err).toBe(0);
    // a BOM anywhere else is still not JSON
    writeFileSync(fitSpec, `{\uFEFF"riskfree": "bill_yield"}`);
    const bad = cli(['fit', fitSpec, '--db', p.dbPath]);
    expect(bad.code).toBe(1);
    expect(bad.err).toContain('is not valid JSON');
  });
});

describe('uploads and file paths', () => {
  it('upload names of 230 to 255 characters are stored (name shortened), not an internal error naming the folder', async () => {
    const home = tempDir();
    const policy = new ImportFilePolicy({ roots: [], incomingDir: path.join(home, 'incoming') });
    const stored: string[] = [];
    const importer = fakeImporter();
    importer.importFile = async (file, kind) => {
      stored.push(file);
      return { file, kind, rows: 1, names: ['a'], warnings: [], durationMs: 1 };
    };
    const core = composeApp({ version: '1', project: () => fakeProject(), importer: () => importer, engine: fakeEngine(), files: policy });
    for (const n of [230, 240, 250, 255]) {
      const name = `${'q'.repeat(n - 4)}.csv`;
      const env = await core.dispatcher.dispatch('importFile', { source: { name, text: 'date,asset,price\n2021-01-29,tern-mill,1\n' }, kind: 'prices' });
      expect(env, `${n} characters`).toMatchObject({ ok: true });
      expect(JSON.stringify(env)).not.toContain(home);
    }
    expect(readdirSync(path.join(home, 'incoming')).length).toBe(4);
    for (const f of stored) {
      expect(path.dirname(f)).toBe(path.join(home, 'incoming'));
      expect(Buffer.byteLength(path.basename(f))).toBeLessThanOrEqual(255);
      expect(f.endsWith('.csv')).toBe(true);
    }
    // over the limit: a clear BAD_REQUEST, not INTERNAL
    const long = await core.dispatcher.dispatch('importFile', { source: { name: `${'q'.repeat(300)}.csv`, text: 'x' }, kind: 'prices' });
    expect(long).toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
  });

  it('a path outside the allowed folders is FORBIDDEN whether it exists, is a folder, a device, a link or nothing at all', () => {
    const root = tempDir();
    const data = path.join(root, 'data');
    const outside = path.join(root, 'outside');
    mkdirSync(data);
    mkdirSync(outside);
    writeFileSync(path.join(outside, 'real.csv'), 'date,asset,price\n');
    mkdirSync(path.join(outside, 'folder.csv'));
    symlinkSync(path.join(outside, 'real.csv'), path.join(outside, 'link.csv'));
    const policy = new ImportFilePolicy({ roots: [data], incomingDir: path.join(root, 'incoming') });
    const answers = new Set<string>();
    for (const probe of ['real.csv', 'missing.csv', 'folder.csv', 'link.csv', 'no/such/dir/x.csv']) {
      const target = path.join(outside, probe);
      try {
        policy.check(target);
        throw new Error(`${probe} was allowed`);
      } catch (e) {
        const err = e as { code: string; message: string; hint: string };
        expect(err.code, probe).toBe('FORBIDDEN');
        answers.add(`${err.code}|${err.message.replace(target, '<path>')}|${err.hint}`);
      }
    }
    for (const dev of ['/dev/null', '/proc/self/environ', '/etc/nonexistent.csv', '/etc/passwd']) expect(codeOf(() => policy.check(dev)), dev).toBe('FORBIDDEN');
    expect(answers.size, [...answers].join('\n')).toBe(1);
    // inside an allowed folder the file system is asked, and a missing file is said so
    expect(codeOf(() => policy.check(path.join(data, 'missing.csv')))).toBe('NOT_FOUND');
  });

  it.skipIf(typeof process.getuid !== 'function' || process.getuid() !== 0)('an upload to a full disk says so, without the folder path, and leaves no half file (skipped unless root: needs a small tmpfs)', async () => {
    const { mountTmpfs } = await import('./mounts.js');
    const mount = mountTmpfs('64k');
    try {
      const policy = new ImportFilePolicy({ roots: [], incomingDir: path.join(mount.dir, 'incoming') });
      let err: { code?: string; message?: string; hint?: string } = {};
      try {
        policy.storeUpload('big.csv', 'x'.repeat(1 << 20));
      } catch (e) {
        err = e as typeof err;
      }
      expect(err.code).toBe('INPUT_INVALID');
      expect(err.message).toContain('disk holding the app folder is full');
      expect(err.message).not.toContain(mount.dir);
      expect(readdirSync(path.join(mount.dir, 'incoming'))).toEqual([]);
    } finally {
      mount.release();
    }
  });
});

describe('request bodies that arrive too slowly', () => {
  it('get 408 once the time allowed for the request is over; a long reply to a whole request is not cut', async () => {
    const core = composeApp({ version: '1', project: () => fakeProject(), importer: () => fakeImporter(), engine: fakeEngine({ steps: 6, stepMs: 250 }), files: openPolicy() });
    const srv = await startServer({ dispatcher: core.dispatcher, subscribe: core.hub.subscribe, port: 0, requestTimeoutMs: 600 });
    try {
      const t0 = Date.now();
      const status = await new Promise<number>((resolve, reject) => {
        const req = http.request(
          { host: '127.0.0.1', port: srv.port, method: 'POST', path: '/api/info', headers: { host: `127.0.0.1:${srv.port}`, 'content-type': 'application/json', authorization: `Bearer ${srv.key}`, 'content-length': '100' } },
          (res) => {
            res.resume();
            resolve(res.statusCode ?? 0);
          },
        );
        req.on('error', () => resolve(-1));
        req.write('{"'); // and then nothing more
        setTimeout(() => reject(new Error('no answer within 10 s')), 10_000);
      });
      const waited = Date.now() - t0;
      expect([408, -1]).toContain(status);
      expect(waited).toBeLessThan(5_000);
      // a fit that takes 1.5 s after its whole request arrived is answered in full
      const r = await fetch(`http://127.0.0.1:${srv.port}/api/fit`, { method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${srv.key}` }, body: JSON.stringify({ spec: { riskfree: 'RF', model: { factors: ['MKT'] } } }) });
      expect(r.status).toBe(200);
      expect(((await r.json()) as { ok: boolean }).ok).toBe(true);
    } finally {
      await srv.close();
    }
  });
});

describe('thread counts are bounded by the machine', () => {
  it('more than two threads per core are cut to that with a note; 0, negatives and fractions are refused', () => {
    const notes: string[] = [];
    expect(threadsFlag('100000', '--threads', 2, (t) => notes.push(t))).toBe(4);
    expect(notes[0]).toContain("--threads 100000 is more than this machine's 2 cores can use (at most 4); using 4");
    expect(threadsFlag('1', '--threads', 2)).toBe(1);
    expect(threadsFlag('3', '--threads', 2)).toBe(3);
    expect(threadsFlag(undefined, '--threads', 2)).toBe(2);
    for (const bad of ['0', '-1', '1.5', 'two', '', '1e3', '0x10']) expect(codeOf(() => threadsFlag(bad, '--threads', 2)), bad).toBe('INPUT_INVALID');
  });

  it('`replay --threads 100000` replays with at most two threads per core and says so; `--threads 0` is refused', () => {
    const r = cli(['replay', '1', '--db', p.dbPath, '--threads', '100000', '--json']);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/--threads 100000 is more than this machine's \d+ cores can use \(at most \d+\); using \d+/);
    const zero = cli(['replay', '1', '--db', p.dbPath, '--threads', '0']);
    expect(zero.code).toBe(1);
    expect(zero.err).toContain('--threads 0: expected a whole number of at least 1');
  });
});
