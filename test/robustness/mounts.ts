/**
 * Small file systems for the full-disk and read-only cases (root only: `mount`). Each
 * mount is a tmpfs of the given size under a fresh temporary folder; `release` unmounts
 * it (lazily, so a file left open by a failed test cannot keep it mounted).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

export const IS_ROOT = typeof process.getuid === 'function' && process.getuid() === 0;

export interface Mount {
  dir: string;
  /** Remounts read-only (the files stay readable). */
  readOnly(): void;
  release(): void;
}

export function mountTmpfs(size: string): Mount {
  const dir = mkdtempSync(path.join(tmpdir(), 'deflator-mount-'));
  execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${size},mode=0755`, 'tmpfs', dir]);
  return {
    dir,
    readOnly: () => execFileSync('mount', ['-o', 'remount,ro', dir]),
    release: () => {
      try {
        execFileSync('umount', ['-l', dir]);
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
  };
}
