/**
 * Bridge security, over the real composition root (openApp: store, import pipeline, file
 * policy, run records, worker pool) and the loopback HTTP server. Every call of the bridge
 * table (shared/bridge/calls.ts) gets, automatically: bodies of the wrong JSON type, an
 * extra key, a "__proto__" key (prototype pollution), each top-level field of the wrong
 * type, each top-level field as a 200,000-element array, deep nesting, a body over the
 * server's size limit, a foreign Host (DNS rebinding) and a foreign Origin (RFC 6454) or
 * cross-site fetch metadata. Every one must come back as an error envelope, and the
 * database must be unchanged. File arguments get path traversal, links out of the allowed
 * folder, NUL bytes, devices and folders. The server must listen on 127.0.0.1 only.
 *
 * A new call needs one valid example in EXAMPLES (the compiler asks for it); everything
 * else above then covers it without further edits.
 */
import http from 'node:http';
import { mkdirSync, readdirSync, symlinkSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CALL_NAMES, CALLS, type CallName, type RequestOf } from '../../shared/bridge/calls.js';
import { isEnvelope, type Envelope } from '../../shared/bridge/envelope.js';
import { openApp, type OpenedApp } from '../../src-main/app/open.js';
import { makeSenderCheck, registerBridgeHandlers } from '../../src-main/electron/ipc.js';
import { APP_URL } from '../../src-main/electron/security.js';
import { startServer, type RunningServer } from '../../src-main/server/http.js';
import { createPool, type DeflatorPool } from '../../src-main/workers/pool.js';
import { cleanTempDirs, databaseState, seedDatabase, stopwatch, tempDir } from './helpers.js';

const LIMIT = 2 * 1024 * 1024;

let dir: string;
let data: string;
let outside: string;
let db: string;
let app: OpenedApp;
let pool: DeflatorPool;
let srv: RunningServer;
let done: () => number;
let tried = 0;

const fitSpec: RequestOf<'fit'>['spec'] = { frequency: 'monthly', assets: ['alder-hollow', 'birch-lane'], riskfree: 'gale_factor', model: { kind: 'linear', factors: ['gale_factor'] } };

/** One well-formed request per call (the type makes a new call's example compulsory). */
function examples(): { [K in CallName]: RequestOf<K> } {
  return {
    info: {},
    coverage: {},
    history: { asset: 'alder-hollow' },
    importFile: { source: { path: path.join(data, 'ok.csv') }, kind: 'prices' },
    previewImport: { source: { path: path.join(data, 'ok.csv') }, kind: 'returns', options: { dateFormat: 'YYYY-MM-DD', missing: '-99.99' }, rows: 5 },
    checkSpec: { spec: fitSpec },
    samplePreview: { spec: fitSpec },
    imports: {},
    fit: { spec: fitSpec },
    backtest: { spec: { ...fitSpec, backtest: { window: 2 } } },
    compare: { spec: { frequency: 'monthly', riskfree: 'gale_factor', compare: [{ model: { kind: 'linear', factors: ['gale_factor'] } }] } },
    presentValue: { spec: { analysis: 'present-value', asset: 'alder-hollow' } },
    drift: { spec: { analysis: 'drift', assets: ['alder-hollow', 'birch-lane'] } },
    cancel: { taskId: 'task-1' },
    runs: {},
    run: { id: 1 },
    deleteRun: { id: 1 },
    replayRun: { id: 1 },
    batchRanking: { id: 1, rankBy: 'oos', top: 10 },
    exportRun: { id: 1, format: 'csv' },
  };
}

beforeAll(async () => {
  done = stopwatch('bridge');
  dir = tempDir();
  data = path.join(dir, 'data');
  outside = path.join(dir, 'outside');
  mkdirSync(data);
  mkdirSync(outside);
  writeFileSync(path.join(data, 'ok.csv'), 'date,asset,price\n2021-01-29,gannet-works,5.00\n2021-02-26,gannet-works,5.10\n');
  writeFileSync(path.join(outside, 'secret.csv'), 'date,asset,price\n2021-01-29,private-holding,9.00\n');
  mkdirSync(path.join(data, 'folder.csv'));
  symlinkSync(path.join(outside, 'secret.csv'), path.join(data, 'link.csv'));
  symlinkSync(outside, path.join(data, 'linked-dir'));
  db = await seedDatabase(dir, 'project.db');
  pool = createPool({ threads: 1 });
  app = await openApp({ dbPath: db, dataDir: path.join(dir, 'appdata'), fileRoots: [data], pool });
  srv = await startServer({ dispatcher: app.dispatcher, subscribe: app.hub.subscribe, port: 0, maxBodyBytes: LIMIT });
}, 60_000);

afterAll(async () => {
  console.log(`[robustness] bridge: ${tried} hostile requests over ${CALL_NAMES.length} calls, every one answered with an error envelope`);
  await srv?.close();
  app?.close();
  await pool?.close();
  done();
  cleanTempDirs();
});

interface Resp {
  status: number;
  body: string;
}

function post(pathname: string, body: string | Buffer, headers: Record<string, string> = {}): Promise<Resp> {
  return new Promise((resolve, reject) => {
    const req = http.request(
      { host: '127.0.0.1', port: srv.port, method: 'POST', path: pathname, headers: { host: `127.0.0.1:${srv.port}`, 'content-type': 'application/json', authorization: `Bearer ${srv.key}`, ...headers } },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
      },
    );
    req.on('error', reject);
    req.end(body);
  });
}

function get(pathname: string, headers: Record<string, string>): Promise<Resp> {
  return new Promise((resolve, reject) => {
    const req = http.get({ host: '127.0.0.1', port: srv.port, path: pathname, headers: { host: `127.0.0.1:${srv.port}`, authorization: `Bearer ${srv.key}`, ...headers } }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.on('error', reject);
  });
}

/** A request written byte for byte on a socket (to send an empty or missing Host, or HTTP/1.0). */
function raw(lines: string[], body = ''): Promise<Resp> {
  return new Promise((resolve, reject) => {
    const s = net.connect({ host: '127.0.0.1', port: srv.port });
    let text = '';
    s.on('data', (c: Buffer) => (text += c.toString('utf8')));
    s.on('end', () => {
      const status = Number(/^HTTP\/1\.[01] (\d{3})/.exec(text)?.[1] ?? 0);
      resolve({ status, body: text.slice(text.indexOf('\r\n\r\n') + 4) });
    });
    s.on('error', reject);
    s.end(`${[...lines, `Content-Length: ${Buffer.byteLength(body)}`, 'Connection: close'].join('\r\n')}\r\n\r\n${body}`);
  });
}

function envelope(r: Resp): Envelope<unknown> {
  const v = JSON.parse(r.body) as unknown;
  expect(isEnvelope(v), r.body.slice(0, 300)).toBe(true);
  return v as Envelope<unknown>;
}

/** Hostile variants of one call's request, each a JSON text and what it is. */
function hostileBodies(name: CallName): { what: string; text: string }[] {
  const ex = examples()[name] as Record<string, unknown>;
  const out: { what: string; text: string }[] = [];
  for (const v of [42, '"text"', '[]', 'null', 'true', '"{}"', `[${JSON.stringify(ex)}]`]) out.push({ what: `body ${String(v).slice(0, 20)}`, text: String(v) });
  out.push({ what: 'extra key', text: JSON.stringify({ ...ex, unexpected: 1 }) });
  out.push({ what: '__proto__ key', text: `{"__proto__":{"polluted":true},${JSON.stringify(ex).slice(1)}`.replace(',}', '}') });
  out.push({ what: 'constructor key', text: JSON.stringify({ ...ex, constructor: { prototype: { polluted: true } } }) });
  let deep = '1';
  for (let i = 0; i < 5000; i++) deep = `[${deep}]`;
  out.push({ what: 'deep nesting', text: JSON.stringify({ ...ex, nested: 0 }).replace('0}', `${deep}}`) });
  const huge = JSON.stringify(Array.from({ length: 200_000 }, () => 1));
  for (const key of Object.keys(ex)) {
    const v = ex[key];
    const wrong: unknown[] = typeof v === 'string' ? [7, [v], { v }, null, true] : typeof v === 'number' ? [String(v), -1, 0.5, 1e309, [v], null] : Array.isArray(v) ? ['x', 1, {}] : typeof v === 'object' && v !== null ? ['x', 1, [], null, true] : [1, 'x'];
    const withRaw = (raw: string) => JSON.stringify({ ...ex, [key]: '\u0000here' }).replace('"\\u0000here"', raw);
    for (const w of wrong) {
      const raw = w === 1e309 ? '1e309' : JSON.stringify(w);
      out.push({ what: `${key} as ${raw}`, text: withRaw(raw) });
    }
    out.push({ what: `${key} as a 200,000-element array`, text: withRaw(huge) });
  }
  const required = Object.keys(ex);
  for (const key of required) {
    const copy = { ...ex };
    delete copy[key];
    if (Object.keys(copy).length < required.length) out.push({ what: `without ${key}`, text: JSON.stringify(copy) });
  }
  return out;
}

describe('bridge: malformed requests to every call', () => {
  it('every call has an example, and every example is answered with an envelope', async () => {
    expect(Object.keys(examples()).sort()).toEqual([...CALL_NAMES].sort());
    for (const name of CALL_NAMES) {
      const r = await post(`/api/${name}`, JSON.stringify(examples()[name]));
      const env = envelope(r);
      if (!env.ok) expect(env.error.code, `${name}: ${env.error.message}`).not.toBe('INTERNAL');
    }
  }, 120_000);

  it.each(CALL_NAMES.filter((n) => n !== 'importFile'))('%s: wrong types, extra keys, huge arrays, deep nesting are refused; the database is unchanged', async (name) => {
    const before = databaseState(db).digest;
    for (const h of hostileBodies(name)) {
      // an optional field left out is fine; the variants that drop a field are checked separately
      if (h.what.startsWith('without ') && !isRequired(name, h.what.slice(8))) continue;
      tried++;
      const r = await post(`/api/${name}`, h.text);
      const env = envelope(r);
      expect(env.ok, `${name}, ${h.what}: accepted`).toBe(false);
      // the Electron IPC handlers hand requests to the same dispatcher, with no body limit
      const direct = await app.dispatcher.dispatch(name, JSON.parse(h.text));
      expect(direct.ok, `${name}, ${h.what}: accepted by the dispatcher`).toBe(false);
      if (!env.ok) {
        expect(['BAD_REQUEST', 'SPEC_INVALID'], `${name}, ${h.what}: ${env.error.code} ${env.error.message}`).toContain(env.error.code);
        expect(r.status).toBeGreaterThanOrEqual(400);
        expect(r.status).toBeLessThan(500);
      }
      expect(({} as { polluted?: unknown }).polluted, 'Object.prototype polluted').toBeUndefined();
    }
    expect(databaseState(db).digest).toBe(before);
  }, 120_000);

  it('importFile: the same hostile bodies, then path traversal, links out of the folder, NUL bytes, devices and folders', async () => {
    const before = databaseState(db).digest;
    for (const h of hostileBodies('importFile')) {
      if (h.what.startsWith('without ') && !isRequired('importFile', h.what.slice(8))) continue;
      tried++;
      const env = envelope(await post('/api/importFile', h.text));
      expect(env.ok, `importFile, ${h.what}: accepted`).toBe(false);
    }
    const paths = [
      '../outside/secret.csv',
      'outside/secret.csv',
      path.join(data, '..', 'outside', 'secret.csv'),
      path.join(outside, 'secret.csv'),
      path.join(data, 'link.csv'),
      path.join(data, 'linked-dir', 'secret.csv'),
      `${path.join(data, 'ok.csv')}\u0000.csv`,
      path.join(data, '%2e%2e', 'outside', 'secret.csv'),
      `${data}/..\\outside\\secret.csv`,
      `file://${path.join(outside, 'secret.csv')}`,
      '~/secret.csv',
      '/etc/passwd',
      '/dev/zero',
      '/proc/self/environ',
      path.join(data, 'folder.csv'),
      path.join(data, 'missing.csv'),
      data,
      'x'.repeat(5000),
    ];
    for (const p of paths) {
      tried++;
      const env = envelope(await post('/api/importFile', JSON.stringify({ source: { path: p }, kind: 'prices' })));
      expect(env.ok, `path ${JSON.stringify(p)} was imported`).toBe(false);
      if (!env.ok) expect(['FORBIDDEN', 'INPUT_INVALID', 'NOT_FOUND', 'BAD_REQUEST'], `${p}: ${env.error.code} ${env.error.message}`).toContain(env.error.code);
    }
    const after = databaseState(db);
    expect(after.digest, 'a refused path changed the database').toBe(before);
    expect(JSON.stringify(after.rows)).not.toContain('private-holding');
  }, 120_000);

  it('importFile: an upload whose name climbs out of the incoming folder stays inside it', async () => {
    const text = 'date,asset,price\n2021-01-29,skua-yard,3.00\n2021-02-26,skua-yard,3.30\n';
    for (const name of ['../../outside/evil.csv', '/etc/cron.d/evil.csv', '..\\..\\evil.csv', '.hidden', 'con.csv\u0000.txt']) {
      tried++;
      const env = envelope(await post('/api/importFile', JSON.stringify({ source: { name, text: text.replace('skua-yard', `skua-${tried}`) }, kind: 'prices' })));
      if (!env.ok) expect(env.error.code, env.error.message).not.toBe('INTERNAL');
    }
    expect(readdirSync(outside).sort()).toEqual(['secret.csv']);
    const incoming = readdirSync(path.join(dir, 'appdata', 'incoming'));
    expect(incoming.length).toBeGreaterThan(0);
    for (const f of incoming) expect(f).toMatch(/^[A-Za-z0-9._-]+$/);
  });

  it('a body over the size limit is refused with 413 on every call, and the server keeps serving', async () => {
    const big = Buffer.alloc(LIMIT + 1, 0x20);
    for (const name of CALL_NAMES) {
      tried++;
      const r = await post(`/api/${name}`, big);
      expect(r.status, name).toBe(413);
      expect(envelope(r)).toMatchObject({ ok: false, error: { code: 'BAD_REQUEST' } });
    }
    expect(envelope(await post('/api/info', '{}')).ok).toBe(true);
  });

  it('unknown calls and prototype names are not calls; non-JSON and other content types are refused', async () => {
    for (const name of ['shutdown', 'constructor', '__proto__', 'toString', 'hasOwnProperty', '..%2Finfo', 'info%00', '%2e%2e', 'INFO', '%E0%A4%A', '%']) {
      tried++;
      const r = await post(`/api/${name}`, '{}');
      expect(r.status, name).toBeGreaterThanOrEqual(400);
      expect(r.status, `${name}: ${r.body}`).toBeLessThan(500);
      if (r.body.startsWith('{')) expect(envelope(r).ok, name).toBe(false);
    }
    for (const name of CALL_NAMES) {
      tried += 3;
      expect((await post(`/api/${name}`, '{"a":')).status).toBe(400);
      expect((await post(`/api/${name}`, '{}', { 'content-type': 'text/plain' })).status).toBe(415);
      expect((await post(`/api/${name}`, '{}', { 'content-type': 'application/x-www-form-urlencoded' })).status).toBe(415);
    }
  });
});

function isRequired(name: CallName, key: string): boolean {
  const ex = examples()[name] as Record<string, unknown>;
  const copy = { ...ex };
  delete copy[key];
  return !CALLS[name].request.safeParse(copy).success;
}

describe('loopback server: Host and Origin must be its own (DNS rebinding, foreign pages)', () => {
  const foreignHosts = (port: number) => [`evil.example:${port}`, `127.0.0.1:${port + 1}`, `localhost.evil.example:${port}`, `127.0.0.1.nip.io:${port}`, '127.0.0.1', 'localhost', `[::1]:${port}`, `0.0.0.0:${port}`, `${os.hostname()}:${port}`, `127.0.0.1:${port}@evil.example`, ''];
  const foreignOrigins = (port: number) => ['http://evil.example', 'null', `http://127.0.0.1:${port + 1}`, `https://127.0.0.1:${port}`, `http://127.0.0.1:${port}.evil.example`, `http://localhost.evil.example:${port}`, 'file://'];

  it('every call, the event stream and the pages refuse a foreign Host with 403', async () => {
    for (const host of foreignHosts(srv.port)) {
      for (const name of CALL_NAMES) {
        tried++;
        const body = JSON.stringify(examples()[name]);
        const r = await raw([`POST /api/${name} HTTP/1.1`, `Host: ${host}`, 'Content-Type: application/json'], body);
        // 403 from the server's check, or 400 from Node's HTTP parser for a malformed Host
        expect([400, 403], `${name} with Host ${JSON.stringify(host)}: ${r.status}`).toContain(r.status);
        if (r.status === 403) expect(envelope(r)).toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
      }
      for (const p of ['/', '/api/events', '/index.html']) {
        tried++;
        const r = await raw([`GET ${p} HTTP/1.1`, `Host: ${host}`]);
        expect([400, 403], `${p} with Host ${JSON.stringify(host)}: ${r.status}`).toContain(r.status);
      }
    }
    // HTTP/1.0 without any Host header
    for (const name of CALL_NAMES) {
      tried++;
      const r = await raw([`POST /api/${name} HTTP/1.0`, 'Content-Type: application/json'], JSON.stringify(examples()[name]));
      expect(r.status, `${name} without Host`).toBe(403);
    }
    // the check reads Host, so an own Host passes (the control for the refusals above)
    expect((await raw(['POST /api/info HTTP/1.1', `Host: 127.0.0.1:${srv.port}`, 'Content-Type: application/json', `Authorization: Bearer ${srv.key}`], '{}')).status).toBe(200);
    expect((await raw(['POST /api/info HTTP/1.1', `Host: LOCALHOST:${srv.port}`, 'Content-Type: application/json', `Authorization: Bearer ${srv.key}`], '{}')).status).toBe(200); // host names are case-insensitive (RFC 3986, 3.2.2)
  }, 120_000);

  it('every call refuses a foreign Origin and a cross-site fetch with 403; its own origin passes', async () => {
    for (const origin of foreignOrigins(srv.port)) {
      for (const name of CALL_NAMES) {
        tried++;
        const r = await post(`/api/${name}`, JSON.stringify(examples()[name]), { origin });
        expect(r.status, `${name} from ${origin}`).toBe(403);
      }
    }
    for (const name of CALL_NAMES) {
      tried++;
      expect((await post(`/api/${name}`, JSON.stringify(examples()[name]), { 'sec-fetch-site': 'cross-site' })).status, name).toBe(403);
    }
    const own = await post('/api/info', '{}', { origin: `http://127.0.0.1:${srv.port}` });
    expect(own.status).toBe(200);
    const ownLocal = await post('/api/info', '{}', { origin: `http://localhost:${srv.port}`, host: `localhost:${srv.port}` });
    expect(ownLocal.status).toBe(200);
  }, 120_000);

  it('listens on 127.0.0.1 only: bound to that address, and no answer on ::1', async () => {
    // The bound address is the proof for every other interface (a socket bound to
    // 127.0.0.1 accepts nothing else); tests connect only to loopback addresses.
    const addr = srv.server.address();
    expect(typeof addr === 'object' && addr !== null ? addr.address : addr).toBe('127.0.0.1');
    const connected = await new Promise<boolean>((resolve) => {
      const s = net.connect({ host: '::1', port: srv.port, timeout: 1000 });
      s.once('connect', () => (s.destroy(), resolve(true)));
      s.once('timeout', () => (s.destroy(), resolve(false)));
      s.once('error', () => resolve(false));
    });
    expect(connected, 'answered on ::1').toBe(false);
    console.log('[robustness] bridge: bound to 127.0.0.1; no answer on ::1');
  });
});

describe('loopback server: a local program without the access key', () => {
  // Host and Origin checks stop browsers; any local account can still open a socket to
  // 127.0.0.1 and send the right Host. The key is what such a program lacks.
  it('gets 401 with one fixed body on every call and the event stream, learns nothing, changes nothing', async () => {
    const before = databaseState(db).digest;
    const bodies = new Set<string>();
    const sameLength = srv.key.replace(/^./, (c) => (c === 'A' ? 'B' : 'A'));
    for (const name of CALL_NAMES) {
      for (const auth of [undefined, `Bearer ${sameLength}`, `Bearer ${srv.key.slice(1)}`, 'Bearer ', `bearer${srv.key}`]) {
        tried++;
        const lines = [`POST /api/${name} HTTP/1.1`, `Host: 127.0.0.1:${srv.port}`, 'Content-Type: application/json', ...(auth === undefined ? [] : [`Authorization: ${auth}`])];
        const r = await raw(lines, JSON.stringify(examples()[name]));
        expect(r.status, `${name} with ${auth ?? 'no key'}`).toBe(401);
        bodies.add(r.body);
      }
    }
    for (const p of ['/api/events', `/api/events?key=${sameLength}`, '/api/events?key=']) {
      tried++;
      const r = await raw([`GET ${p} HTTP/1.1`, `Host: 127.0.0.1:${srv.port}`]);
      expect(r.status, p).toBe(401);
      bodies.add(r.body);
    }
    expect(bodies.size, [...bodies].join('\n')).toBe(1);
    const body = [...bodies][0];
    expect(envelope({ status: 401, body })).toMatchObject({ ok: false, error: { code: 'UNAUTHORIZED' } });
    for (const secret of ['project.db', 'alder-hollow', 'birch-lane', 'gale_factor', dir, srv.key]) expect(body).not.toContain(secret);
    expect(databaseState(db).digest, 'a request without the key changed the database').toBe(before);
  }, 120_000);
});

describe('Electron IPC: the same table, the sender checked first', () => {
  type Handler = (event: unknown, request: unknown, taskId?: unknown) => Promise<Envelope<unknown>>;
  const handlers = new Map<string, Handler>();
  const fakeIpc = { handle: (channel: string, fn: Handler) => void handlers.set(channel, fn) };
  const event = (id: number, url: string, parent: unknown = null) => ({ sender: { id }, senderFrame: { url, parent } });

  it('registers one channel per call; a foreign window, a sub-frame or a foreign page gets FORBIDDEN on every call', async () => {
    const channels = registerBridgeHandlers(fakeIpc as never, () => app.dispatcher, makeSenderCheck(() => [1]));
    expect(channels.length).toBe(CALL_NAMES.length);
    const bad = [event(2, APP_URL), event(1, APP_URL, {}), event(1, 'https://evil.example/'), event(1, 'file:///etc/passwd'), { sender: { id: 1 }, senderFrame: null }];
    for (const ch of channels) {
      for (const e of bad) {
        tried++;
        const env = await handlers.get(ch)!(e, {});
        expect(env, ch).toMatchObject({ ok: false, error: { code: 'FORBIDDEN' } });
      }
    }
  });

  it('from the app window, every hostile body of every call is still an error envelope', async () => {
    const ok = event(1, APP_URL);
    const channels = registerBridgeHandlers(fakeIpc as never, () => app.dispatcher, makeSenderCheck(() => [1]));
    for (const [i, name] of CALL_NAMES.entries()) {
      for (const h of hostileBodies(name)) {
        if (h.what.startsWith('without ') && !isRequired(name, h.what.slice(8))) continue;
        tried++;
        const env = await handlers.get(channels[i])!(ok, JSON.parse(h.text));
        expect(env.ok, `${name} over IPC, ${h.what}`).toBe(false);
      }
    }
  }, 120_000);
});
