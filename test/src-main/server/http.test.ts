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

function request(method: string, p: string, opts: { body?: string; headers?: Record<string, string> } = {}): Promise<Resp> {
  return new Promise((resolve, reject) => {
    const req = http.request(
      { host: '127.0.0.1', port: srv.port, method, path: p, headers: { host: `127.0.0.1:${srv.port}`, ...opts.headers } },
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
      const req = http.get({ host: '127.0.0.1', port: srv.port, path: '/api/events', headers: { host: `127.0.0.1:${srv.port}` } }, resolve);
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
