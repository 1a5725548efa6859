/**
 * `deflator serve` as a user starts it: the printed address carries this start's access
 * key, `--key-file` writes that address owner-only (0600, also over an existing file with
 * wider permissions; a symbolic link there is refused) and removes it on stop, and a
 * request without the key gets 401. As root the test also plays the other local account
 * the key protects against: a process running as `nobody` can neither read the key file
 * nor call the API.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, readFileSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { tempDir } from '../import/helpers.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
const children: ChildProcess[] = [];
afterAll(() => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
});

function startServe(dir: string, extra: string[]): Promise<{ child: ChildProcess; address: string; stdout: () => string }> {
  const child = spawn(process.execPath, [cli, 'serve', '--db', path.join(dir, 'p.db'), '--port', '0', '--threads', '1', ...extra], {
    env: { ...process.env, DEFLATOR_HOME: path.join(dir, 'home') },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let out = '';
  let err = '';
  child.stdout!.on('data', (c: Buffer) => (out += c.toString('utf8')));
  child.stderr!.on('data', (c: Buffer) => (err += c.toString('utf8')));
  return new Promise((resolve, reject) => {
    const timer = setInterval(() => {
      const m = /serving \S+ at (http:\/\/127\.0\.0\.1:\d+\/#key=[A-Za-z0-9_-]+)/.exec(out);
      if (m) {
        clearInterval(timer);
        resolve({ child, address: m[1], stdout: () => out });
      }
    }, 50);
    child.on('exit', (code) => {
      clearInterval(timer);
      reject(new Error(`serve exited ${code}: ${err}`));
    });
  });
}

const stopped = (c: ChildProcess): Promise<number | null> => new Promise((r) => (c.exitCode !== null ? r(c.exitCode) : c.once('exit', (code) => r(code))));

async function call(address: string, key: string | undefined): Promise<number> {
  const u = new URL(address);
  const r = await fetch(`${u.origin}/api/coverage`, { method: 'POST', headers: { 'content-type': 'application/json', ...(key ? { authorization: `Bearer ${key}` } : {}) }, body: '{}' });
  await r.arrayBuffer();
  return r.status;
}

describe('deflator serve: the access key', () => {
  it('prints the address with the key, writes the key file 0600 over a wider existing file, answers 401 without the key, removes the file on stop', async () => {
    const dir = tempDir();
    const keyFile = path.join(dir, 'serve.key');
    writeFileSync(keyFile, 'old contents\n', { mode: 0o644 });
    chmodSync(keyFile, 0o644);
    const { child, address, stdout } = await startServe(dir, ['--key-file', keyFile]);
    const key = new URL(address).hash.replace('#key=', '');
    expect(key).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(stdout()).toContain('access key');
    expect(readFileSync(keyFile, 'utf8')).toBe(`${address}\n`);
    expect(statSync(keyFile).mode & 0o777).toBe(0o600);
    expect(await call(address, undefined)).toBe(401);
    expect(await call(address, key.replace(/^./, (c) => (c === 'A' ? 'B' : 'A')))).toBe(401);
    expect(await call(address, key)).toBe(200);
    // a second start has another key; the first key does not open it
    const dir2 = tempDir();
    const second = await startServe(dir2, []);
    expect(await call(second.address, key)).toBe(401);
    second.child.kill('SIGTERM');
    child.kill('SIGTERM');
    expect(await stopped(child)).toBe(0);
    expect(existsSync(keyFile)).toBe(false);
    await stopped(second.child);
  }, 60_000);

  it('refuses a symbolic link as the key file (it could point at another file of yours)', () => {
    const dir = tempDir();
    const target = path.join(dir, 'victim.txt');
    writeFileSync(target, 'keep me\n');
    const link = path.join(dir, 'serve.key');
    symlinkSync(target, link);
    const r = spawnSync(process.execPath, [cli, 'serve', '--db', path.join(dir, 'p.db'), '--port', '0', '--threads', '1', '--key-file', link], {
      env: { ...process.env, DEFLATOR_HOME: path.join(dir, 'home') },
      encoding: 'utf8',
      timeout: 30_000,
    });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toContain('symbolic link');
    expect(readFileSync(target, 'utf8')).toBe('keep me\n');
  }, 60_000);

  it.skipIf(!isRoot)('another local account (nobody) can neither read the key file nor call the API (skipped unless root: needs to switch user)', async () => {
    const dir = tempDir();
    const shared = path.join(dir, 'shared');
    mkdirSync(shared);
    chmodSync(dir, 0o755);
    chmodSync(shared, 0o755);
    const keyFile = path.join(shared, 'serve.key');
    const { child, address } = await startServe(dir, ['--key-file', keyFile]);
    const probe = `
      const fs = require('node:fs');
      let read = 'read';
      try { fs.readFileSync(${JSON.stringify(keyFile)}, 'utf8'); } catch (e) { read = e.code; }
      fetch(${JSON.stringify(`${new URL(address).origin}/api/coverage`)}, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{}' })
        .then((r) => r.text().then((t) => console.log(JSON.stringify({ read, status: r.status, body: t }))));`;
    const r = spawnSync(process.execPath, ['-e', probe], { uid: 65534, gid: 65534, encoding: 'utf8', timeout: 30_000, cwd: '/' });
    const seen = JSON.parse(r.stdout.trim()) as { read: string; status: number; body: string };
    expect(seen.read).toBe('EACCES');
    expect(seen.status).toBe(401);
    expect(seen.body).not.toContain('p.db');
    child.kill('SIGTERM');
    await stopped(child);
  }, 60_000);
});
