import { describe, expect, it } from 'vitest';
import { mkdtempSync, mkdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { ImportFilePolicy } from '../../../src-main/app/files.js';

function setup() {
  const root = mkdtempSync(path.join(os.tmpdir(), 'deflator-files-'));
  const data = path.join(root, 'data');
  const outside = path.join(root, 'outside');
  mkdirSync(data);
  mkdirSync(outside);
  writeFileSync(path.join(data, 'prices.csv'), 'date,asset,price\n');
  writeFileSync(path.join(outside, 'other.csv'), 'x\n');
  writeFileSync(path.join(data, 'notes.docx'), 'x');
  mkdirSync(path.join(data, 'folder.csv'));
  symlinkSync(path.join(outside, 'other.csv'), path.join(data, 'link.csv'));
  const policy = new ImportFilePolicy({ roots: [data], incomingDir: path.join(root, 'incoming') });
  return { root, data, outside, policy };
}

const code = (f: () => unknown): string | undefined => {
  try {
    f();
    return undefined;
  } catch (e) {
    return (e as { code?: string }).code;
  }
};

describe('import file policy', () => {
  it('allows a CSV inside a chosen folder and returns its real path', () => {
    const { data, policy } = setup();
    expect(policy.check(path.join(data, 'prices.csv'))).toBe(path.join(data, 'prices.csv'));
  });

  it('refuses relative paths, traversal out of the folder, and links pointing outside', () => {
    const { data, outside, policy } = setup();
    expect(code(() => policy.check('data/prices.csv'))).toBe('INPUT_INVALID');
    expect(code(() => policy.check(path.join(data, '..', 'outside', 'other.csv')))).toBe('FORBIDDEN');
    expect(code(() => policy.check(path.join(outside, 'other.csv')))).toBe('FORBIDDEN');
    expect(code(() => policy.check(path.join(data, 'link.csv')))).toBe('FORBIDDEN');
    expect(code(() => policy.check(`${path.join(data, 'prices.csv')}\0.csv`))).toBe('INPUT_INVALID');
  });

  it('refuses missing files, folders and other file types', () => {
    const { data, policy } = setup();
    expect(code(() => policy.check(path.join(data, 'missing.csv')))).toBe('NOT_FOUND');
    expect(code(() => policy.check(path.join(data, 'folder.csv')))).toBe('INPUT_INVALID');
    expect(code(() => policy.check(path.join(data, 'notes.docx')))).toBe('INPUT_INVALID');
  });

  it('allows a single file the user picked in a dialog, and nothing next to it', () => {
    const { outside, policy } = setup();
    writeFileSync(path.join(outside, 'next.csv'), 'x\n');
    policy.grant(path.join(outside, 'other.csv'));
    expect(policy.check(path.join(outside, 'other.csv'))).toBe(path.join(outside, 'other.csv'));
    expect(code(() => policy.check(path.join(outside, 'next.csv')))).toBe('FORBIDDEN');
  });

  it('stores uploads under the incoming folder with a sanitised name, readable back', () => {
    const { root, policy } = setup();
    const file = policy.storeUpload('../../etc/cron.d/evil name.csv', 'date,a\n');
    expect(path.dirname(file)).toBe(path.join(root, 'incoming'));
    expect(path.basename(file)).toMatch(/-evil_name\.csv$/);
    expect(readFileSync(file, 'utf8')).toBe('date,a\n');
    expect(policy.check(file)).toBe(file);
    expect(path.extname(policy.storeUpload('series', 'x'))).toBe('.csv');
  });
});
