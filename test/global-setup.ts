// Compiles the Node entry points (CLI, worker) once, so tests run the same JS the
// product ships: workers cannot load .ts files under Node 20.
import { execFileSync } from 'node:child_process';
import path from 'node:path';

export default function setup(): void {
  const root = path.resolve(import.meta.dirname, '..');
  execFileSync(process.execPath, [path.join(root, 'scripts/build.mjs')], { cwd: root, stdio: 'inherit' });
}
