/**
 * The command line's bundle as scripts/build.mjs writes it (vitest's global setup builds
 * it): ASCII only (so Node reads it as one-byte text, not as two-byte UTF-16), and zod's
 * locales namespace reduced to English, the only language whose messages are used (a spec
 * error still reads in English).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '../../..');

describe('the CLI bundle', () => {
  it('is ASCII only and carries English messages alone', () => {
    const bytes = readFileSync(path.join(root, 'dist', 'cli.cjs'));
    expect(bytes.length).toBeGreaterThan(100_000);
    expect(bytes.findIndex((b) => b > 0x7f)).toBe(-1);
    const text = bytes.toString('latin1');
    expect(text).toMatch(/zod\/v4\/locales\/en\.js/);
    expect(text).not.toMatch(/zod\/v4\/locales\/(de|fr|ca|he)\.js/);
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bundle-'));
    const spec = path.join(dir, 'bad.json');
    writeFileSync(spec, '{"label": 5}');
    const r = spawnSync(process.execPath, [path.join(root, 'dist', 'cli.js'), 'fit', spec, '--db', path.join(dir, 'none.db')], { encoding: 'utf8' });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toMatch(/spec\.label: Invalid input: expected string, received number/);
  });
});
