/**
 * The launcher's code cache (src-main/cli/launch.ts): a command's first run stores what V8
 * compiled in dist/cache/, later runs of that build hand it back to V8 (accepted: the file
 * is not written again), and writing a new cache drops the same command's caches of
 * earlier builds, never another command's. A made-up command name keeps this test's
 * files apart from the other tests' runs (an unknown command is refused, but its process
 * still stores its cache).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');
const cacheDir = path.join(root, 'dist', 'cache');
const probe = 'cache-probe';
const stale = path.join(cacheDir, `cli-0123456789abcdef-1-1-${probe}.v8`);
const other = path.join(cacheDir, `cli-0123456789abcdef-1-1-${probe}-other.v8`);
const mine = () => readdirSync(cacheDir).filter((f) => f.endsWith(`-${probe}.v8`) && !f.startsWith('cli-0123456789abcdef-'));

afterAll(() => {
  for (const f of [stale, other, ...mine().map((f) => path.join(cacheDir, f))]) rmSync(f, { force: true });
});

describe('code cache', () => {
  it("stores a command's cache, reuses it, and drops that command's caches of earlier builds only", () => {
    mkdirSync(cacheDir, { recursive: true });
    for (const f of mine()) rmSync(path.join(cacheDir, f));
    writeFileSync(stale, 'a cache of an earlier build');
    writeFileSync(other, 'a cache of another command');
    const first = spawnSync(process.execPath, [cli, probe], { cwd: root, encoding: 'utf8' });
    expect(first.stderr).toMatch(/unknown command 'cache-probe'/);
    const made = mine();
    expect(made).toHaveLength(1);
    expect(existsSync(stale)).toBe(false);
    expect(existsSync(other)).toBe(true);
    const file = path.join(cacheDir, made[0]);
    const before = statSync(file).mtimeMs;
    const second = spawnSync(process.execPath, [cli, probe], { cwd: root, encoding: 'utf8' });
    expect(second.stderr).toMatch(/unknown command 'cache-probe'/);
    // accepted by V8: not written again
    expect(statSync(file).mtimeMs).toBe(before);
    expect(mine()).toEqual(made);
  });
});
