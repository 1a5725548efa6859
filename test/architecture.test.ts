/**
 * The layering rules of DEVELOPERS.md, checked on the source text: what each folder may
 * import, where `electron` and ECharts may appear, and the page's security policy.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { CONTENT_SECURITY_POLICY_META } from '../shared/bridge/csp.js';

const root = path.resolve(import.meta.dirname, '..');

function files(dir: string, exts = ['.ts', '.cts', '.vue', '.mjs']): string[] {
  const out: string[] = [];
  const abs = path.join(root, dir);
  let entries: string[];
  try {
    entries = readdirSync(abs);
  } catch {
    return out;
  }
  for (const e of entries) {
    if (e === 'node_modules' || e === 'dist' || e.startsWith('.')) continue;
    const p = path.join(abs, e);
    if (statSync(p).isDirectory()) out.push(...files(path.join(dir, e), exts));
    else if (exts.some((x) => e.endsWith(x))) out.push(path.join(dir, e));
  }
  return out;
}

const IMPORT = /(?:^|[\s;])(?:import|export)\s+(?:type\s+)?(?:[^'";]*?\sfrom\s*)?['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g;

function importsOf(file: string): string[] {
  const text = readFileSync(path.join(root, file), 'utf8').replace(/\/\*[\s\S]*?\*\//g, '').replace(/^\s*\/\/.*$/gm, '');
  const out: string[] = [];
  for (const m of text.matchAll(IMPORT)) out.push(m[1] ?? m[2]);
  return out;
}

function resolvesInto(file: string, spec: string, folder: string): boolean {
  if (!spec.startsWith('.')) return false;
  const target = path.resolve(path.dirname(path.join(root, file)), spec);
  return target.startsWith(path.join(root, folder) + path.sep);
}

const shared = files('shared');
const main = files('src-main');
const renderer = files('src-renderer');

describe('architecture', () => {
  it('finds the source files', () => {
    expect(shared.length).toBeGreaterThan(10);
    expect(main.length).toBeGreaterThan(10);
    expect(renderer.length).toBeGreaterThan(10);
  });

  it('shared/ imports only shared/ and pure-JS packages (no node:, electron, vue, better-sqlite3, DOM libraries)', () => {
    const allowed = new Set(['ml-matrix', 'simple-statistics', 'jstat']);
    const bad: string[] = [];
    for (const f of shared) {
      for (const s of importsOf(f)) {
        if (s.startsWith('.')) {
          if (!path.resolve(path.dirname(path.join(root, f)), s).startsWith(path.join(root, 'shared') + path.sep)) bad.push(`${f}: ${s}`);
        } else if (!allowed.has(s.split('/')[0])) bad.push(`${f}: ${s}`);
      }
    }
    expect(bad).toEqual([]);
  });

  it('the renderer never imports src-main, and src-main never imports the renderer', () => {
    const bad = [
      ...renderer.flatMap((f) => importsOf(f).filter((s) => resolvesInto(f, s, 'src-main')).map((s) => `${f}: ${s}`)),
      ...main.flatMap((f) => importsOf(f).filter((s) => resolvesInto(f, s, 'src-renderer')).map((s) => `${f}: ${s}`)),
    ];
    expect(bad).toEqual([]);
  });

  it('only src-main/electron imports electron', () => {
    const users = [...shared, ...main, ...renderer].filter((f) => importsOf(f).some((s) => s === 'electron' || s.startsWith('electron/')));
    expect(users.length).toBeGreaterThan(0);
    expect(users.filter((f) => !f.startsWith(path.join('src-main', 'electron') + path.sep))).toEqual([]);
  });

  it('ECharts modules are registered in one file of the renderer', () => {
    const users = [...shared, ...main, ...renderer].filter((f) => importsOf(f).some((s) => s === 'echarts' || s.startsWith('echarts/') || s === 'vue-echarts'));
    expect(users).toEqual([path.join('src-renderer', 'src', 'charts', 'echarts.ts')]);
  });

  it('screens and components reach the bridge only through the stores', () => {
    const ui = renderer.filter((f) => /src-renderer[\\/]src[\\/](views|components)[\\/]/.test(f));
    expect(ui.length).toBeGreaterThan(5);
    // types of the bridge are fine; the client (src-renderer/src/bridge, shared/bridge/client) is not
    const bad = ui.flatMap((f) =>
      importsOf(f)
        .filter((s) => resolvesInto(f, s, path.join('src-renderer', 'src', 'bridge')) || /bridge\/client(\.js)?$/.test(s))
        .map((s) => `${f}: ${s}`),
    );
    expect(bad).toEqual([]);
  });

  it('relative imports in shared/ and src-main/ carry the .js suffix (NodeNext)', () => {
    const bad = [...shared, ...main]
      .filter((f) => f.endsWith('.ts'))
      .flatMap((f) => importsOf(f).filter((s) => s.startsWith('.') && !s.endsWith('.js') && !s.endsWith('.json')).map((s) => `${f}: ${s}`));
    expect(bad).toEqual([]);
  });

  it('the page carries the same Content-Security-Policy as the servers send', () => {
    const html = readFileSync(path.join(root, 'src-renderer', 'index.html'), 'utf8');
    const m = /http-equiv="Content-Security-Policy"\s+content="([^"]+)"/.exec(html);
    expect(m?.[1]).toBe(CONTENT_SECURITY_POLICY_META);
    expect(html).not.toMatch(/<script(?![^>]*\bsrc=)[^>]*>/);
  });

  it('no absolute machine paths in the app, server, shell and renderer sources', () => {
    const mine = [...files('src-main/app'), ...files('src-main/server'), ...files('src-main/electron'), ...renderer, ...files('shared/bridge'), ...files('shared/charts'), ...files('test/e2e'), 'scripts/start.mjs'];
    const bad = mine.filter((f) => /['"`]\/(work|root|home)\//.test(readFileSync(path.join(root, f), 'utf8')));
    expect(bad).toEqual([]);
  });
});
