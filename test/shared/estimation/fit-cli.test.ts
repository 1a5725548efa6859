/**
 * `deflator fit` end to end on the demo database (built by `deflator demo`): every sample
 * spec in sample-data/specs runs; the JSON keys others rely on are present; the readable
 * report carries the header, tables and the caution; the CLI's numbers equal an
 * in-process fit of the same spec and panel bit for bit; bad specs exit with a named error.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fit } from '../../../shared/estimation/fit.js';
import { resultToText } from '../../../shared/report/text.js';
import { CAUTION, type FitResult } from '../../../shared/results.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { Store } from '../../../src-main/store/store.js';
import { readFitSpec } from '../../../src-main/cli/commands/fit.js';

const ROOT = path.resolve(import.meta.dirname, '../../..');
const CLI = path.join(ROOT, 'dist/cli.js');
const SPECS = path.join(ROOT, 'sample-data/specs');

function cli(args: string[]): { code: number; out: string; err: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', cwd: ROOT });
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

let dir: string;
let db: string;

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'deflator-fit-'));
  db = path.join(dir, 'demo.db');
  const r = cli(['demo', '--db', db, '--json']);
  expect(r.code, r.err).toBe(0);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('deflator fit on the demo database', () => {
  // The fit specs: not the comparison or back-test specs that share the folder.
  const specs = readdirSync(SPECS).filter((f) => {
    if (!f.endsWith('.json')) return false;
    const j = JSON.parse(readFileSync(path.join(SPECS, f), 'utf8')) as Record<string, unknown>;
    // Grids (`deflator batch`) and the return-file set's specs (run on `deflator demo --set
    // returns` in test/src-main/cli/returns-commands.test.ts) share the folder too.
    return !('compare' in j) && !('backtest' in j) && !('grid' in j) && !f.startsWith('returns-');
  });

  it('there is a sample spec for every model, GMM stage, weight and method', () => {
    const parsed = specs.map((f) => readFitSpec(path.join(SPECS, f)));
    for (const kind of ['linear', 'linear-raw', 'linear-gross', 'consumption']) expect(parsed.some((s) => s.model.kind === kind), kind).toBe(true);
    for (const stage of ['first', 'second', 'iterated', 'cue']) expect(parsed.some((s) => s.estimator.method === 'gmm' && s.estimator.stage === stage), stage).toBe(true);
    for (const weight of ['identity', 'hj']) expect(parsed.some((s) => s.estimator.stage === 'first' && s.estimator.weight === weight), weight).toBe(true);
    for (const method of ['gmm', 'time-series', 'two-pass']) expect(parsed.some((s) => s.estimator.method === method), method).toBe(true);
  });

  for (const f of specs)
    it(`${f} runs and prints the report`, () => {
      const r = cli(['fit', path.join('sample-data/specs', f), '--db', db, '--no-record']);
      expect(r.code, r.err).toBe(0);
      expect(r.out).toMatch(/^  sample +\d{4}-\d{2}-\d{2} to \d{4}-\d{2}-\d{2}, monthly \(12 periods per year\), T = \d+$/m);
      expect(r.out).toContain('Parameter estimates');
      expect(r.out).toContain('Pricing errors');
      expect(r.out).toContain('(% per month)');
      expect(r.out).toContain('Tests');
      expect(r.out.trimEnd().endsWith(CAUTION)).toBe(true);
    });

  it('--json carries the contract keys, records the run, and equals an in-process fit bit for bit', () => {
    const specFile = path.join(SPECS, 'linear-second.json');
    const r = cli(['fit', specFile, '--db', db, '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out) as FitResult & { run: number; caution: string };
    expect(Object.keys(j.sample)).toEqual(expect.arrayContaining(['start', 'end', 'T', 'N', 'K', 'lags']));
    expect(j.sample).toMatchObject({ start: '2001-01-31', end: '2024-12-31', T: 288, N: 30, K: 3, lags: 5, stage: 'second' });
    expect(j.params.map((p) => p.name)).toEqual(['b.harbor', 'b.ember', 'b.ledger', 'mu.harbor', 'mu.ember', 'mu.ledger', 'lambda.harbor', 'lambda.ember', 'lambda.ledger']);
    for (const p of j.params) expect(Object.keys(p)).toEqual(expect.arrayContaining(['name', 'estimate', 'se']));
    for (const e of j.pricingErrors) expect(Object.keys(e)).toEqual(expect.arrayContaining(['asset', 'alpha', 'se']));
    expect(Object.keys(j.test)).toEqual(expect.arrayContaining(['stat', 'df', 'p']));
    expect(Object.keys(j.hj!)).toEqual(expect.arrayContaining(['distance', 'p', 'method']));
    expect(Object.keys(j.fit)).toEqual(expect.arrayContaining(['mape', 'rmse', 'r2']));
    expect(j.caution).toBe(CAUTION);
    expect(j.run).toBeGreaterThan(0);

    const spec = readFitSpec(specFile);
    const store = new Store(db, { mustExist: true });
    try {
      const local = fit(spec, loadPanel(store, spec));
      local.params.forEach((p, i) => expect(Object.is(j.params[i].estimate, p.estimate) && Object.is(j.params[i].se, p.se), p.name).toBe(true));
      local.pricingErrors.forEach((e, i) => expect(Object.is(j.pricingErrors[i].alpha, e.alpha), e.asset).toBe(true));
      expect(j.test.stat).toBe(local.test.stat);
      expect(j.hj!.p).toBe(local.hj!.p);
      expect(resultToText(local)).toContain(local.label);
    } finally {
      store.close();
    }
    const shown = cli(['show', String(j.run), '--db', db]);
    expect(shown.code, shown.err).toBe(0);
  });

  it('a bad spec exits 1 naming the key; a missing file names the file', () => {
    const bad = path.join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor'] }, estimator: { stage: 'fourth' } }));
    const r = cli(['fit', bad, '--db', db]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/spec\.estimator\.stage/);
    const broken = path.join(dir, 'broken.json');
    writeFileSync(broken, '{ "returns": "excess", ');
    expect(cli(['fit', broken, '--db', db]).err).toMatch(/is not valid JSON/);
    expect(cli(['fit', path.join(dir, 'none.json'), '--db', db]).err).toMatch(/none\.json: no such file/);
  });

  it('an estimation error reaches the terminal with its cause and hint', () => {
    const under = path.join(dir, 'under.json');
    writeFileSync(under, JSON.stringify({ returns: 'excess', riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks'], model: { kind: 'linear', factors: ['harbor', 'ember'] } }));
    const r = cli(['fit', under, '--db', db, '--no-record']);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/2 test assets give 4 moments for 4 parameters/);
    expect(r.err).toMatch(/-> add test assets/);
  });
});
