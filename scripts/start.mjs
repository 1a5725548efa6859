// `npm start`: opens the desktop app (Electron) on the demo database. Where the Electron
// binary is not installed, says so in one line and serves the same interface on
// 127.0.0.1 for any browser instead (`deflator serve`). Extra arguments pass through
// (e.g. `npm start -- --db my.db`).
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);

/** The Electron executable, found the way the electron package finds it, without triggering its download. */
function electronBinary() {
  const dir = path.join(root, 'node_modules', 'electron');
  const pathFile = path.join(dir, 'path.txt');
  if (!existsSync(pathFile)) return undefined;
  const exe = path.join(process.env.ELECTRON_OVERRIDE_DIST_PATH ?? path.join(dir, 'dist'), readFileSync(pathFile, 'utf8').trim());
  return existsSync(exe) ? exe : undefined;
}

function run(cmd, argv) {
  const child = spawn(cmd, argv, { cwd: root, stdio: 'inherit' });
  const forward = (sig) => child.kill(sig);
  process.on('SIGINT', forward);
  process.on('SIGTERM', forward);
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 0 : 1)));
}

const exe = electronBinary();
if (exe && existsSync(path.join(root, 'dist', 'main.js'))) {
  run(exe, [path.join(root, 'dist', 'main.js'), ...args]);
} else {
  process.stdout.write('deflator: the Electron binary is not installed here, so the same interface is served on 127.0.0.1 for your browser instead.\n');
  run(process.execPath, [path.join(root, 'dist', 'cli.js'), 'serve', ...args]);
}
