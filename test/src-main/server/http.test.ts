import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import http from 'node:http';
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { composeApp } from '../../../src-main/app/compose.js';
import { startServer } from '../../../src-main/server/http.js';
import type { RunningServer } from '../../../src-main/server/http.js';
import { fakeEngine, fakeImporter, fakeProject, openPolicy } from '../app/fakes.js';

let srv: RunningServer;
let secretDir: string;

interface Resp { status: number; headers: http.IncomingHttpHeaders; body: string }

function request(method: string, p: string, opts: { body?: string; headers?: Record<string, string>; noKey?: boolean } = {}): Promise<Resp> {
  return new Promise((resolve, reject) => {
    const auth: Record<string, string> = opts.noKey ? {} : { authorization: `Bearer ${srv.key}` };
    const req = http.request(
      { host: '127.0.0.1', port: srv.port, method, path: p, headers: { host: `127.0.0.1:${srv.port}`, ...auth, ...opts.headers } },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks).toString('utf8') }));
      },
    );
    req.on('error', reject);
    if (opts.body !== undefined) req.write(opts.body);
    req.end();
  });
}

const json = { 'content-type': 'application/json' };

beforeAll(async () => {
  const root = mkdtempSync(path.join(os.tmpdir(), 'deflator-http-'));
  const web = path.join(root, 'web');
  mkdirSync(path.join(web, 'assets'), { recursive: true });
  writeFileSync(path.join(web, 'index.html'), '<!doctype html><title>t</title>');
  writeFileSync(path.join(web, 'assets', 'app.js'), 'console.log(1)');
  secretDir = path.join(root, 'secret');
  mkdirSync(secretDir);
  writeFileSync(path.join(secretDir, 'key.txt'), 'do not serve');
  const project = fakeProject();
  const importer = fakeImporter();
  const core = composeApp({ version: '1', project: () => project, importer: () => importer, engine: fakeEngine({ steps: 4, stepMs: 60 }), files: openPolicy() });
  srv = await startServer({ dispatcher: core.dispatcher, subscribe: core.hub.subscribe, staticDir: web, port: 0, maxBodyBytes: 4096 });
});
afterAll(async () => srv.close());

describe('loopback server', () => {
  it('binds 127.0.0.1 on a free port', () => {
    const addr = srv.server.address();
    expect(typeof addr === 'object' && addr?.address).toBe('127.0.0.1');
    expect(srv.port).toBeGreaterThan(0);
    expect(srv.url).toBe(`http://127.0.0.1:${srv.port}/`);
  });

  it('answers a bridge call with an envelope', async () => {
    const r = await request('POST', '/api/info', { body: '{}', headers: json });
    expect(r.status).toBe(200);
    expect(JSON.parse(r.body)).toMatchObject({ ok: true, value: { version: '1' } });
    expect(r.headers['content-security-policy']).toContain("script-src 'self'");
  });

  it('refuses a foreign Host (DNS rebinding) and a foreign Origin', async () => {
    const rebinding = await request('POST', '/api/info', { body: '{}', headers: { ...json, host: `evil.example:${srv.port}` } });
    expect(rebinding.status).toBe(403);
    expect(JSON.parse(rebinding.body)).toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
    const page = await request('GET', '/', { headers: { host: `evil.example:${srv.port}` } });
    expect(page.status).toBe(403);
    const otherPort = await request('POST', '/api/info', { body: '{}', headers: { ...json, host: `127.0.0.1:${srv.port + 1}` } });
    expect(otherPort.status).toBe(403);
    const origin = await request('POST', '/api/info', { body: '{}', headers: { ...json, origin: 'http://evil.example' } });
    expect(origin.status).toBe(403);
    const sameOrigin = await request('POST', '/api/info', { body: '{}', headers: { ...json, origin: `http://localhost:${srv.port}`, host: `localhost:${srv.port}` } });
    expect(sameOrigin.status).toBe(200);
  });

  it('rejects malformed requests with an error reply, never a crash', async () => {
    const notJson = await request('POST', '/api/info', { body: '{oops', headers: json });
    expect(notJson.status).toBe(400);
    expect(JSON.parse(notJson.body)).toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
    const wrongType = await request('POST', '/api/info', { body: '{}', headers: { 'content-type': 'text/plain' } });
    expect(wrongType.status).toBe(415);
    const extra = await request('POST', '/api/coverage', { body: '{"x":1}', headers: json });
    expect(JSON.parse(extra.body)).toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
    const unknown = await request('POST', '/api/shutdown', { body: '{}', headers: json });
    expect(unknown.status).toBe(404);
    const get = await request('GET', '/api/info');
    expect(get.status).toBe(405);
    const big = await request('POST', '/api/info', { body: JSON.stringify({ pad: 'x'.repeat(5000) }), headers: json });
    expect(big.status).toBe(413);
    for (const r of [notJson, wrongType, extra, unknown, get, big]) {
      const body = JSON.parse(r.body) as { ok: boolean; error: { code: string; message: string; hint?: string } };
      expect(body.ok).toBe(false);
      expect(body.error.message.length, r.body).toBeGreaterThan(5);
      expect(body.error.hint?.length ?? 0, `a hint in ${r.body}`).toBeGreaterThan(5);
    }
    // still alive
    expect((await request('POST', '/api/info', { body: '{}', headers: json })).status).toBe(200);
  });

  it('serves the renderer and nothing outside its folder', async () => {
    const index = await request('GET', '/');
    expect(index.status).toBe(200);
    expect(index.headers['content-type']).toContain('text/html');
    expect((await request('GET', '/assets/app.js')).headers['content-type']).toContain('javascript');
    for (const p of ['/../secret/key.txt', '/%2e%2e/secret/key.txt', '/assets/%2e%2e/%2e%2e/secret/key.txt', '/%00', '/nope.js']) {
      const r = await request('GET', p);
      expect(r.status, p).not.toBe(200);
      expect(r.body).not.toContain('do not serve');
    }
  });

  it('streams progress of a task over Server-Sent Events', async () => {
    const events: { type: string; done?: number; taskId?: string }[] = [];
    const stream = await new Promise<http.IncomingMessage>((resolve, reject) => {
      const req = http.get({ host: '127.0.0.1', port: srv.port, path: `/api/events?key=${srv.key}`, headers: { host: `127.0.0.1:${srv.port}` } }, resolve);
      req.on('error', reject);
    });
    expect(stream.headers['content-type']).toContain('text/event-stream');
    let buf = '';
    stream.on('data', (c: Buffer) => {
      buf += c.toString('utf8');
      let i: number;
      while ((i = buf.indexOf('\n\n')) >= 0) {
        const block = buf.slice(0, i);
        buf = buf.slice(i + 2);
        const data = block.split('\n').find((l) => l.startsWith('data: '));
        if (data) events.push(JSON.parse(data.slice(6)));
      }
    });
    const spec = { riskfree: 'RF', model: { factors: ['MKT'] } };
    const r = await request('POST', '/api/fit', { body: JSON.stringify({ spec }), headers: { ...json, 'x-deflator-task': 'sse1' } });
    expect(JSON.parse(r.body).ok).toBe(true);
    await new Promise((res) => setTimeout(res, 50));
    stream.destroy();
    const mine = events.filter((e) => e.taskId === 'sse1');
    expect(mine.filter((e) => e.type === 'progress').map((e) => e.done)).toEqual([1, 2, 3, 4]);
    expect(mine[mine.length - 1].type).toBe('task-end');
  });
});

describe('loopback server: the access key', () => {
  // Host and Origin checks stop browsers, not other local programs; the key stops those.
  // 401 with a WWW-Authenticate challenge follows RFC 6750 (bearer tokens) and RFC 9110.
  const wrongKeys = (key: string): string[] => ['', 'x', key.slice(0, -1), `${key}x`, key.replace(/^./, (c) => (c === 'A' ? 'B' : 'A')), key.toLowerCase() === key ? key.toUpperCase() : key.toLowerCase()];

  it('is 256 random bits, different at each start, and carried by the printed address after #key=', async () => {
    expect(srv.key).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(srv.openUrl).toBe(`http://127.0.0.1:${srv.port}/#key=${srv.key}`);
    const core = composeApp({ version: '1', project: () => fakeProject(), importer: () => fakeImporter(), engine: fakeEngine(), files: openPolicy() });
    const other = await startServer({ dispatcher: core.dispatcher, subscribe: core.hub.subscribe, port: 0 });
    try {
      expect(other.key).not.toBe(srv.key);
    } finally {
      await other.close();
    }
  });

  it('a call without the key, or with a wrong one, gets 401 and one fixed body, whatever the call, method or body', async () => {
    const bodies = new Set<string>();
    const cases: [string, string, Record<string, string>, string | undefined][] = [];
    for (const p of ['/api/info', '/api/coverage', '/api/history', '/api/runs', '/api/no-such-call', '/api/', '/api', '/api/%E0%A4%A']) {
      cases.push(['POST', p, json, '{}']);
    }
    cases.push(['GET', '/api/info', {}, undefined], ['POST', '/api/info', { 'content-type': 'text/plain' }, 'x'], ['POST', '/api/info', json, '{oops']);
    cases.push(['POST', '/api/info', json, JSON.stringify({ pad: 'x'.repeat(5000) })]);
    for (const [method, p, headers, body] of cases) {
      const r = await request(method, p, { noKey: true, headers, ...(body === undefined ? {} : { body }) });
      expect(r.status, `${method} ${p}`).toBe(401);
      expect(r.headers['www-authenticate']).toBe('Bearer realm="deflator"');
      bodies.add(r.body);
    }
    for (const k of wrongKeys(srv.key)) {
      const r = await request('POST', '/api/coverage', { body: '{}', headers: { ...json, authorization: `Bearer ${k}` } });
      expect(r.status, k).toBe(401);
      bodies.add(r.body);
    }
    for (const auth of [`Basic ${Buffer.from(`u:${srv.key}`).toString('base64')}`, srv.key, `Token ${srv.key}`]) {
      const r = await request('POST', '/api/coverage', { body: '{}', headers: { ...json, authorization: auth } });
      expect(r.status, auth).toBe(401);
      bodies.add(r.body);
    }
    // the key in the query string is for the event stream only
    expect((await request('POST', `/api/coverage?key=${srv.key}`, { body: '{}', headers: json, noKey: true })).status).toBe(401);
    expect(bodies.size).toBe(1);
    const [body] = [...bodies];
    expect(JSON.parse(body)).toMatchObject({ ok: false, error: { code: 'UNAUTHORIZED' } });
    // nothing about the project leaks: not the database, an asset, a series or a call name
    for (const secret of ['fake.db', 'A1', 'MKT', 'coverage', 'history', srv.key]) expect(body).not.toContain(secret);
    // with the key the same call answers
    expect((await request('POST', '/api/coverage', { body: '{}', headers: json })).status).toBe(200);
  });

  it('the event stream needs the key too; the static app does not', async () => {
    const get = (p: string): Promise<http.IncomingMessage> =>
      new Promise((resolve, reject) => {
        const req = http.get({ host: '127.0.0.1', port: srv.port, path: p, headers: { host: `127.0.0.1:${srv.port}` } }, resolve);
        req.on('error', reject);
      });
    for (const p of ['/api/events', '/api/events?key=', `/api/events?key=${wrongKeys(srv.key)[4]}`, `/api/events?key=${srv.key}x`]) {
      const r = await get(p);
      expect(r.statusCode, p).toBe(401);
      r.resume();
    }
    const ok = await get(`/api/events?key=${srv.key}`);
    expect(ok.statusCode).toBe(200);
    expect(ok.headers['content-type']).toContain('text/event-stream');
    ok.destroy();
    expect((await request('GET', '/', { noKey: true })).status).toBe(200);
    expect((await request('GET', '/assets/app.js', { noKey: true })).status).toBe(200);
  });
});
