/**
 * Exports never leave a half file: each file goes to a temporary file beside its target
 * and is renamed over it (rename(2) replaces the target in one step, POSIX), so on a full
 * disk or a read-only folder the report written before is byte for byte what it was, no
 * temporary file is left, and the message says what happened (disk full, read-only,
 * permission) with exit code 6. The full and read-only cases use a small tmpfs (root).
 */
import { closeSync, mkdirSync, openSync, readdirSync, readFileSync, writeFileSync, writeSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project } from '../src-main/runs/helpers.js';
import { cleanTempDirs, tempDir, cli, projectWithRun } from './helpers.js';
import { IS_ROOT, mountTmpfs } from './mounts.js';

let p: Project;
beforeAll(async () => {
  p = await projectWithRun();
}, 60_000);
afterAll(() => cleanTempDirs());

function fill(dir: string): void {
  const fd = openSync(path.join(dir, 'filler'), 'w');
  const block = Buffer.alloc(4096, 7);
  try {
    for (;;) writeSync(fd, block);
  } catch {
    // full
  } finally {
    closeSync(fd);
  }
}

/** Every file under dir (but the filler) with its bytes; folders by their entries. */
function snapshot(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    if (e.name === 'filler') continue;
    const f = path.join(dir, e.name);
    if (e.isDirectory()) for (const [k, v] of Object.entries(snapshot(f))) out[`${e.name}/${k}`] = v;
    else out[e.name] = readFileSync(f).toString('base64');
  }
  return out;
}

describe('exports are written whole or not at all', () => {
  it('an --out path that is a folder, or under a file, is a clear INPUT_INVALID and writes nothing', () => {
    const dir = tempDir();
    mkdirSync(path.join(dir, 'report.html'));
    writeFileSync(path.join(dir, 'plain'), 'x');
    const a = cli(['export', '1', '--db', p.dbPath, '--format', 'html', '--out', path.join(dir, 'report.html')]);
    expect(a.code, a.err).toBe(1);
    expect(a.err).toContain('is a folder');
    const b = cli(['export', '1', '--db', p.dbPath, '--format', 'html', '--out', path.join(dir, 'plain', 'report.html')]);
    expect(b.code, b.err).toBe(1);
    expect(readdirSync(dir).sort()).toEqual(['plain', 'report.html']);
    expect(readdirSync(path.join(dir, 'report.html'))).toEqual([]);
  });

  it.skipIf(!IS_ROOT)('on a full disk the earlier report and CSV files stay byte for byte, no temporary file is left, exit 6 says the disk is full (skipped unless root: needs a tmpfs)', () => {
    const mount = mountTmpfs('2m');
    try {
      const html = path.join(mount.dir, 'run1.html');
      const csvDir = path.join(mount.dir, 'csv') + '/';
      for (const args of [['--format', 'html', '--out', html], ['--format', 'csv', '--out', csvDir], ['--format', 'latex', '--out', path.join(mount.dir, 'run1.tex')]]) {
        const ok = cli(['export', '1', '--db', p.dbPath, ...args]);
        expect(ok.code, ok.err).toBe(0);
      }
      const before = snapshot(mount.dir);
      const csvBefore = snapshot(csvDir);
      fill(mount.dir);
      for (const args of [['--format', 'html', '--out', html], ['--format', 'csv', '--out', csvDir], ['--format', 'latex', '--out', path.join(mount.dir, 'run1.tex')]]) {
        const r = cli(['export', '1', '--db', p.dbPath, ...args]);
        expect(r.code, `${args.join(' ')}: ${r.err}`).toBe(6);
        expect(r.err).toContain('is full (ENOSPC)');
        expect(r.err).toContain('nothing was replaced');
      }
      expect(snapshot(mount.dir)).toEqual(before);
      expect(snapshot(csvDir)).toEqual(csvBefore);
      // and a read-only disk: the same, saying so
      mount.readOnly();
      const ro = cli(['export', '1', '--db', p.dbPath, '--format', 'html', '--out', html]);
      expect(ro.code, ro.err).toBe(6);
      expect(ro.err).toContain('read-only disk (EROFS)');
      expect(snapshot(mount.dir)).toEqual(before);
    } finally {
      mount.release();
    }
  }, 120_000);
});
