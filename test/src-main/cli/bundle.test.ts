/**
 * The command line's bundle as scripts/build.mjs writes it (vitest's global setup builds
 * it): ASCII only (so Node reads it as one-byte text, not as two-byte UTF-16), minified,
 * and a spec error read from it names the key and what it takes.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '../../..');

describe('the CLI bundle', () => {
  it('is ASCII only, minified, and refuses a bad spec naming the key', () => {
    const bytes = readFileSync(path.join(root, 'dist', 'cli.cjs'));
    expect(bytes.length).toBeGreaterThan(100_000);
    expect(bytes.findIndex((b) => b > 0x7f)).toBe(-1);
    expect(bytes.length).toBeLessThan(900_000); // 1.45 MB before it was minified
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bundle-'));
    const spec = path.join(dir, 'bad.json');
    writeFileSync(spec, '{"label": 5}');
    const r = spawnSync(process.execPath, [path.join(root, 'dist', 'cli.js'), 'fit', spec, '--db', path.join(dir, 'none.db')], { encoding: 'utf8' });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/spec\.label: expected a string, got 5/);
  });
});
