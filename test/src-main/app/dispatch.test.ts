import { describe, expect, it } from 'vitest';
import { composeApp } from '../../../src-main/app/compose.js';
import type { BridgeEvent } from '../../../shared/bridge/types.js';
import { fakeEngine, fakeImporter, fakeProject, openPolicy, tinyFit } from './fakes.js';

const spec = { riskfree: 'RF', model: { factors: ['MKT'] } };

function app(engineOpts?: { steps?: number; stepMs?: number }) {
  const engine = fakeEngine(engineOpts);
  const importer = fakeImporter();
  const project = fakeProject();
  const core = composeApp({ version: '9.9.9', project: () => project, importer: () => importer, engine, files: openPolicy() });
  const events: BridgeEvent[] = [];
  core.hub.subscribe((e) => events.push(e));
  return { ...core, engine, importer, events };
}

describe('dispatcher', () => {
  it('answers info with the caution and counts', async () => {
    const a = app();
    const r = await a.dispatcher.dispatch('info', {});
    expect(r).toMatchObject({ ok: true, value: { version: '9.9.9', database: 'fake.db', counts: { assets: 1, series: 1, portfolios: 0 } } });
    if (r.ok) expect((r.value as { caution: string }).caution).toMatch(/not investment advice/);
  });

  it('never throws: a malformed request, an unknown call and a failing handler each give an error reply', async () => {
    const a = app();
    await expect(a.dispatcher.dispatch('fit', { spec: 'nope' })).resolves.toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
    await expect(a.dispatcher.dispatch('nosuch', {})).resolves.toMatchObject({ ok: false, error: { code: 'UNKNOWN_CALL' } });
    await expect(a.dispatcher.dispatch('history', { asset: 'ZZ' })).resolves.toMatchObject({ ok: false, error: { code: 'NOT_FOUND', hint: 'import it first' } });
    expect(a.engine.calls).toEqual([]);
  });

  it('runs the cross-key spec checks before the engine sees the spec', async () => {
    const a = app();
    const r = await a.dispatcher.dispatch('fit', { spec: { returns: 'gross', riskfree: 'RF', model: { factors: ['MKT'] } } });
    expect(r).toMatchObject({ ok: false, error: { code: 'SPEC_INVALID' } });
    if (!r.ok) expect(r.error.message).toContain('prices excess returns');
    const b = await a.dispatcher.dispatch('backtest', { spec });
    expect(b).toMatchObject({ ok: false, error: { code: 'SPEC_INVALID' } });
    expect(a.engine.calls).toEqual([]);
  });

  it('emits progress for task calls, tagged with the caller task id, then a task-end', async () => {
    const a = app({ steps: 3, stepMs: 60 });
    const r = await a.dispatcher.dispatch('fit', { spec }, 'abc');
    expect(r.ok).toBe(true);
    const mine = a.events.filter((e) => 'taskId' in e && e.taskId === 'abc');
    expect(mine.filter((e) => e.type === 'progress').map((e) => (e.type === 'progress' ? e.done : -1))).toEqual([1, 2, 3]);
    expect(mine[mine.length - 1]).toEqual({ type: 'task-end', taskId: 'abc', ok: true });
    expect(a.tasks.size).toBe(0);
  });

  it('cancels a running task from a second call', async () => {
    const a = app({ steps: 50, stepMs: 10 });
    const running = a.dispatcher.dispatch('backtest', { spec: { ...spec, backtest: { window: 24 } } }, 'bt1');
    await new Promise((r) => setTimeout(r, 30));
    await expect(a.dispatcher.dispatch('cancel', { taskId: 'bt1' })).resolves.toEqual({ ok: true, value: { cancelled: true } });
    await expect(running).resolves.toMatchObject({ ok: false, error: { code: 'CANCELLED' } });
    await expect(a.dispatcher.dispatch('cancel', { taskId: 'bt1' })).resolves.toEqual({ ok: true, value: { cancelled: false } });
  });

  it('a result kept despite a late cancel is answered as the result, with exactly one task-end', async () => {
    // The handler decides: the real engine checks the signal right before it records the
    // run, so a value means the run was recorded. Answering CANCELLED here (as before)
    // told the caller nothing was saved while a run record existed.
    const kept: string[] = [];
    const engine = fakeEngine();
    engine.fit = async (s) => {
      await new Promise((r) => setTimeout(r, 60));
      kept.push(s.label ?? 'fit'); // ignores the signal: the work is done and kept
      return tinyFit('kept');
    };
    const core = composeApp({ version: '1', project: () => fakeProject(), importer: () => fakeImporter(), engine, files: openPolicy() });
    const events: BridgeEvent[] = [];
    core.hub.subscribe((e) => events.push(e));
    const running = core.dispatcher.dispatch('fit', { spec }, 'late');
    await new Promise((r) => setTimeout(r, 20));
    await core.dispatcher.dispatch('cancel', { taskId: 'late' });
    const reply = await running;
    expect(kept.length).toBe(1);
    expect(reply).toMatchObject({ ok: true, value: { label: 'kept' } });
    expect(events.filter((e) => e.type === 'task-end' && e.taskId === 'late')).toEqual([{ type: 'task-end', taskId: 'late', ok: true }]);
    // and a cancelled one: one CANCELLED reply and one task-end
    const b = app({ steps: 50, stepMs: 10 });
    const bt = b.dispatcher.dispatch('backtest', { spec: { ...spec, backtest: { window: 24 } } }, 'gone');
    await new Promise((r) => setTimeout(r, 30));
    await b.dispatcher.dispatch('cancel', { taskId: 'gone' });
    expect(await bt).toMatchObject({ ok: false, error: { code: 'CANCELLED' } });
    expect(b.events.filter((e) => e.type === 'task-end' && e.taskId === 'gone')).toEqual([{ type: 'task-end', taskId: 'gone', ok: false }]);
  });

  it('refuses a second task with an id already running', async () => {
    const a = app({ steps: 5, stepMs: 10 });
    const first = a.dispatcher.dispatch('fit', { spec }, 'same');
    const second = await a.dispatcher.dispatch('fit', { spec }, 'same');
    expect(second).toMatchObject({ ok: false, error: { code: 'CONFLICT' } });
    expect((await first).ok).toBe(true);
    expect(await a.dispatcher.dispatch('fit', { spec }, 'bad id!')).toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
  });

  it('imports only files the policy allows; uploads go through the incoming folder', async () => {
    const a = app();
    const denied = await a.dispatcher.dispatch('importFile', { kind: 'prices', source: { path: '/etc/passwd' } });
    expect(denied).toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
    const ok = await a.dispatcher.dispatch('importFile', { kind: 'prices', source: { path: '/allowed/p.csv' } });
    expect(ok).toMatchObject({ ok: true, value: { rows: 3, warnings: [{ line: 3 }] } });
    const up = await a.dispatcher.dispatch('importFile', { kind: 'series', source: { name: 'f.csv', text: 'date,MKT\n' } });
    expect(up).toMatchObject({ ok: true, value: { file: 'f.csv' } });
    expect(a.importer.files).toEqual(['/allowed/p.csv', '/incoming/f.csv']);
  });
});
