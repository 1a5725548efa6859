/**
 * Text that reaches a terminal: a spec label holding an escape sequence used to be printed
 * raw (the terminal then acted on it: window title, clear screen, colours). Now such spec
 * values are refused (SPEC_INVALID naming the key), as are file names holding them, and
 * whatever is printed anyway (the label of a run recorded before the rule, say) has its
 * control characters shown as \uXXXX. The sequences are ECMA-48 controls (OSC, CSI, BEL).
 */
import { copyFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fit } from '../../shared/estimation/fit.js';
import { parseCompareSpec, parseFitSpec } from '../../shared/spec.js';
import { loadPanel } from '../../src-main/data/panel.js';
import { recordRun } from '../../src-main/runs/runs.js';
import { makeProject, type Project } from '../src-main/runs/helpers.js';
import { databaseState, cli } from './helpers.js';

const HOSTILE = '\u001b]0;owned\u0007\u001b[2J\u001b[31mred\u009b0m';
const RAW = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/;

let p: Project;
beforeAll(async () => {
  p = await makeProject();
  // a run recorded before specs refused control characters: its label holds the sequence
  const spec = parseFitSpec({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks', 'greyhallow-banking'], model: { factors: ['harbor'] } });
  spec.label = `legacy ${HOSTILE}`;
  const panel = loadPanel(p.store, spec);
  const result = fit(spec, panel);
  result.label = spec.label;
  recordRun(p.store, { spec, result, panel });
  p.store.close();
}, 60_000);
afterAll(() => p?.store.close());

describe('text that reaches a terminal', () => {
  it('a spec label, factor or comparison label holding a control character is refused, naming the key', () => {
    expect(() => parseFitSpec({ label: `x${HOSTILE}`, riskfree: 'rf', model: { factors: ['f'] } })).toThrow(/spec\.label: holds the control character U\+001B/);
    expect(() => parseFitSpec({ riskfree: 'rf', model: { factors: ['f\u0007'] } })).toThrow(/spec\.model\.factors\.0: holds the control character U\+0007/);
    expect(() => parseCompareSpec({ riskfree: 'rf', compare: [{ model: { factors: ['f'] } }, { label: '\u009b2J', model: { factors: ['f'] } }] })).toThrow(/spec\.compare\.1\.label: holds the control character U\+009B/);
    const file = path.join(p.dir, 'hostile-spec.json');
    writeFileSync(file, JSON.stringify({ label: HOSTILE, riskfree: 'bill_yield', model: { factors: ['harbor'] } }));
    const r = cli(['fit', file, '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toContain('spec.label: holds the control character U+001B');
    expect(r.out + r.err).not.toMatch(RAW);
  });

  it('the label of an older record is printed with its control characters escaped (runs, show)', () => {
    for (const args of [['runs', '--db', p.dbPath], ['show', '1', '--db', p.dbPath]]) {
      const r = cli(args);
      expect(r.code, r.err).toBe(0);
      expect(r.out, args.join(' ')).not.toMatch(RAW);
      expect(r.out).toContain('legacy \\u001b]0;owned\\u0007\\u001b[2J');
    }
  });

  it('a file whose name holds a control character is refused before it is read; the database is unchanged', () => {
    const before = databaseState(p.dbPath).digest;
    const evil = path.join(p.dir, `prices${'\u001b[31m'}.csv`);
    copyFileSync(p.file('prices.csv'), evil);
    const r = cli(['import', 'prices', evil, '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toContain('holds the control character U+001B');
    expect(r.err).not.toMatch(RAW);
    expect(databaseState(p.dbPath).digest).toBe(before);
  });

});
