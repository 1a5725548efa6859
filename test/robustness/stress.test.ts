/**
 * Concurrency under load: many fits, back-tests and comparisons at once through the
 * loopback server (the real composition root: store, run records, a two-thread worker
 * pool), about half of them cancelled at random moments (while queued, while running,
 * and around the moment they finish; and each wave's last call when the first of the
 * others answers), with a busy-looping process competing for the CPU. Every call must get exactly one reply and exactly one task-end event within the
 * time bound; a reply is either the result with its run id or CANCELLED (only for calls
 * that were cancelled); and the run table holds exactly the runs of the successful
 * replies, so a cancelled call recorded nothing. The cancel times come from a fixed seed
 * (`DEFLATOR_STRESS_SEED` to try another sequence).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { copyFileSync } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { openApp, type OpenedApp } from '../../src-main/app/open.js';
import { startServer, type RunningServer } from '../../src-main/server/http.js';
import { createPool, type DeflatorPool } from '../../src-main/workers/pool.js';
import { makeProject } from '../src-main/runs/helpers.js';
import { seeded, stopwatch } from './helpers.js';

const SEED = Number(process.env.DEFLATOR_STRESS_SEED ?? '20260415');
const WAVES = 5;
const PER_WAVE = 6;
/** Time allowed for one wave's replies (a wave takes a few seconds when nothing stalls). */
const WAVE_BOUND_MS = 30_000;

let project: Awaited<ReturnType<typeof makeProject>>;
let hog: ChildProcess | undefined;
let done: () => number;

beforeAll(async () => {
  done = stopwatch('stress');
  project = await makeProject();
  project.store.close();
  // a competing busy loop (what other work on the machine does to timing)
  hog = spawn(process.execPath, ['-e', 'for(;;){}'], { stdio: 'ignore' });
}, 120_000);

afterAll(() => {
  hog?.kill('SIGKILL');
  done?.();
});

interface Server {
  port: number;
  key: string;
}

function post(srv: Server, name: string, body: unknown, taskId?: string): Promise<{ status: number; env: { ok: boolean; value?: { runId?: number }; error?: { code: string; message: string } } }> {
  return new Promise((resolve, reject) => {
    const text = JSON.stringify(body);
    const headers: Record<string, string> = { host: `127.0.0.1:${srv.port}`, 'content-type': 'application/json', authorization: `Bearer ${srv.key}` };
    if (taskId) headers['x-deflator-task'] = taskId;
    const req = http.request({ host: '127.0.0.1', port: srv.port, method: 'POST', path: `/api/${name}`, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, env: JSON.parse(Buffer.concat(chunks).toString('utf8')) }));
    });
    req.on('error', reject);
    req.end(text);
  });
}

const base = { frequency: 'monthly', returns: 'excess', riskfree: 'bill_yield' } as const;
const three = { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] } as const;
const requests: { name: 'fit' | 'backtest' | 'compare'; body: unknown }[] = [
  { name: 'fit', body: { spec: { ...base, label: 'stress fit', model: three, estimator: { method: 'gmm', stage: 'second', lags: 'auto' } } } },
  { name: 'fit', body: { spec: { ...base, label: 'stress cue', model: three, estimator: { method: 'gmm', stage: 'cue', lags: 2 } } } },
  { name: 'backtest', body: { spec: { ...base, label: 'stress rolling', model: three, estimator: { method: 'gmm', stage: 'second', lags: 'auto' }, backtest: { window: 120, step: 3, horizon: 1 } } } },
  { name: 'backtest', body: { spec: { ...base, label: 'stress two-pass', model: three, estimator: { method: 'two-pass' }, backtest: { window: 96, step: 4, horizon: 1 } } } },
  {
    name: 'compare',
    body: {
      spec: {
        ...base,
        estimator: { method: 'gmm', stage: 'second', lags: 'auto' },
        bootstrap: { replications: 99, block: 'auto', seed: 7 },
        compare: [
          { label: 'one', model: { kind: 'linear', factors: ['harbor'] } },
          { label: 'three', model: three },
        ],
      },
    },
  },
];

interface Tally {
  calls: number;
  cancelRequests: number;
  ok: number;
  cancelled: number;
  seconds: number;
}

/**
 * Waves of calls sent together, some cancelled at random moments; each wave must be fully
 * answered before the next starts, so a call left waiting after the last cancel of its
 * wave has nothing later to wake it (how the stall showed: a call without a reply until
 * some unrelated call came).
 */
async function stress(threads: number, seed: number): Promise<Tally> {
  const pool: DeflatorPool = createPool({ threads });
  const dbPath = path.join(project.dir, `stress-${threads}.db`);
  copyFileSync(project.dbPath, dbPath);
  const app: OpenedApp = await openApp({ dbPath, dataDir: path.join(project.dir, `appdata-${threads}`), pool });
  const srv: RunningServer = await startServer({ dispatcher: app.dispatcher, subscribe: app.hub.subscribe, port: 0 });
  const stream = await new Promise<http.IncomingMessage>((resolve, reject) => {
    const req = http.get({ host: '127.0.0.1', port: srv.port, path: `/api/events?key=${srv.key}`, headers: { host: `127.0.0.1:${srv.port}` } }, resolve);
    req.on('error', reject);
  });
  try {
    const rand = seeded(seed);
    const ends = new Map<string, number>();
    let buf = '';
    stream.on('data', (c: Buffer) => {
      buf += c.toString('utf8');
      let i: number;
      while ((i = buf.indexOf('\n\n')) >= 0) {
        const line = buf.slice(0, i).split('\n').find((l) => l.startsWith('data: '));
        buf = buf.slice(i + 2);
        if (!line) continue;
        const e = JSON.parse(line.slice(6)) as { type: string; taskId?: string };
        if (e.type === 'task-end' && e.taskId) ends.set(e.taskId, (ends.get(e.taskId) ?? 0) + 1);
      }
    });
    const t0 = Date.now();
    const cancelled = new Set<string>();
    const replies = new Map<string, number>();
    const runIds = new Set<number>();
    const tally: Tally = { calls: 0, cancelRequests: 0, ok: 0, cancelled: 0, seconds: 0 };
    for (let w = 0; w < WAVES; w++) {
      // Cancels still pending when their call has already been answered are dropped at the
      // wave's end; the ones sent are awaited, so none reaches a server that has been closed.
      const cancelTimers: ReturnType<typeof setTimeout>[] = [];
      const cancelPosts: Promise<unknown>[] = [];
      const calls = Array.from({ length: PER_WAVE }, (_, j) => {
        const r = requests[Math.floor(rand() * requests.length)];
        const id = `t${threads}-w${w}-${j}`;
        const cancelAt = rand() < 0.5 ? Math.floor(rand() * 2500) : -1;
        tally.calls++;
        const reply = post(srv, r.name, r.body, id).then((x) => {
          replies.set(id, (replies.get(id) ?? 0) + 1);
          return x;
        });
        if (cancelAt >= 0) {
          tally.cancelRequests++;
          cancelTimers.push(
            setTimeout(() => {
              cancelled.add(id);
              cancelPosts.push(post(srv, 'cancel', { taskId: id }));
            }, cancelAt),
          );
        }
        return reply.then((x) => ({ id, name: r.name, reply: x }));
      });
      // and the wave's last call cancelled when the first other call answers: it is then
      // still queued or running whatever the machine's speed (the random moments above can
      // all fall after a fast wave has finished)
      const lastId = `t${threads}-w${w}-${PER_WAVE - 1}`;
      void Promise.race(calls.slice(0, -1)).then(() => {
        if (replies.has(lastId)) return;
        tally.cancelRequests++;
        cancelled.add(lastId);
        cancelPosts.push(post(srv, 'cancel', { taskId: lastId }));
      });
      const outcome = await Promise.race([Promise.all(calls), new Promise<'timeout'>((res) => setTimeout(() => res('timeout'), WAVE_BOUND_MS))]);
      if (outcome === 'timeout') {
        const missing = Array.from({ length: PER_WAVE }, (_, j) => `t${threads}-w${w}-${j}`).filter((id) => !replies.has(id));
        throw new Error(`${threads} thread(s), wave ${w}: no reply within ${WAVE_BOUND_MS / 1000} s to ${missing.join(', ')}`);
      }
      cancelTimers.forEach(clearTimeout);
      await Promise.all(cancelPosts);
      await new Promise((res) => setTimeout(res, 100)); // the wave's last events
      for (const { id, name, reply } of outcome) {
        expect(replies.get(id), `${id}: replies`).toBe(1);
        expect(ends.get(id), `${id}: task-end events`).toBe(1);
        if (reply.env.ok) {
          tally.ok++;
          const runId = reply.env.value?.runId;
          expect(typeof runId, `${id} (${name}) has a run id`).toBe('number');
          runIds.add(runId!);
        } else {
          expect(reply.env.error?.code, `${id} (${name}): ${reply.env.error?.message}`).toBe('CANCELLED');
          expect(cancelled.has(id), `${id} replied CANCELLED but was not cancelled`).toBe(true);
          tally.cancelled++;
        }
      }
    }
    tally.seconds = (Date.now() - t0) / 1000;
    const db = new Database(dbPath, { readonly: true, fileMustExist: true });
    const stored = (db.prepare('SELECT id FROM run ORDER BY id').all() as { id: number }[]).map((r) => r.id);
    db.close();
    expect(stored, 'the run table holds exactly the runs of the successful replies').toEqual([...runIds].sort((a, b) => a - b));
    return tally;
  } finally {
    stream.destroy();
    await srv.close();
    app.close();
    await pool.close();
  }
}

describe('many concurrent calls, random cancels, a competing CPU hog', () => {
  for (const threads of [1, 2]) {
    it(`${threads} worker thread(s): ${WAVES} waves of ${PER_WAVE} calls; exactly one reply and one task-end each; cancelled calls record nothing`, async () => {
      const t = await stress(threads, SEED + threads);
      expect(t.ok, 'some calls finished').toBeGreaterThan(0);
      expect(t.cancelled, 'some calls were cancelled').toBeGreaterThan(0);
      console.log(`[robustness] stress, ${threads} thread(s): ${t.calls} calls (${t.cancelRequests} cancel requests), ${t.ok} results recorded, ${t.cancelled} CANCELLED with nothing recorded; one reply and one task-end each; ${t.seconds.toFixed(1)} s beside a CPU hog (seed ${SEED + threads})`);
    }, WAVES * WAVE_BOUND_MS + 30_000);
  }
});
