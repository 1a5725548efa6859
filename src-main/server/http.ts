/**
 * The loopback HTTP transport: the same bridge calls as the Electron IPC, for any browser
 * on this machine.
 *
 *   POST /api/<call>   JSON request body -> JSON envelope; header X-Deflator-Task carries
 *                      the caller's task id for long calls
 *   GET  /api/events   Server-Sent Events: progress and task-end events
 *   GET  /*            the built renderer (dist/renderer)
 *
 * Binds 127.0.0.1 only. Every request must carry Host 127.0.0.1:<port> or localhost:<port>
 * and, where the browser sends one, the same Origin: a page from another site (or a
 * rebinding DNS name pointing at 127.0.0.1) gets 403.
 *
 * Host and Origin stop browsers, not other programs: any local account can open a socket
 * to 127.0.0.1. So every /api/ request must also carry the access key, a random 256-bit
 * secret made at each start: `Authorization: Bearer <key>` on calls, `?key=<key>` on the
 * event stream (EventSource cannot set headers). The printed address carries it after
 * `#key=` (a fragment: browsers never send it, so it reaches no log or Referer); the page
 * keeps it in sessionStorage. It is compared in constant time (SHA-256 of both sides,
 * timingSafeEqual). A request without it, or with another, gets 401 with one fixed body,
 * before its method, path, content type or body are looked at: it learns nothing. The
 * renderer's static files need no key (they are the public build and hold no data).
 */
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import { createServer } from 'node:http';
import type { IncomingMessage, Server, ServerResponse } from 'node:http';
import { readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { CONTENT_SECURITY_POLICY } from '../../shared/bridge/csp.js';
import { errorReply } from '../../shared/bridge/envelope.js';
import type { BridgeErrorCode, Envelope } from '../../shared/bridge/envelope.js';
import type { BridgeEvent } from '../../shared/bridge/types.js';
import type { Dispatcher } from '../app/dispatch.js';

export interface ServerOptions {
  dispatcher: Dispatcher;
  /** Register for events to forward on /api/events; returns an unsubscribe function. */
  subscribe: (listener: (e: BridgeEvent) => void) => () => void;
  /** The built renderer; without it only the API is served. */
  staticDir?: string;
  /** 0 = any free port. */
  port?: number;
  /** Largest accepted request body (bytes); uploads of CSV text travel in the body. */
  maxBodyBytes?: number;
  /**
   * Time allowed to receive a whole request, headers and body (ms; default 120 s: a
   * 300 MB upload over loopback takes a few seconds). A request still arriving then gets
   * 408 and its connection is closed, so a slow sender cannot hold the server's sockets.
   * The reply itself has no limit: a long fit takes what it takes.
   */
  requestTimeoutMs?: number;
}

export interface RunningServer {
  /** The server's address, without the access key. */
  url: string;
  /** The address to open in a browser: `url` with `#key=<key>`. */
  openUrl: string;
  /** The access key of this start (43 base64url characters, 256 random bits). */
  key: string;
  port: number;
  server: Server;
  close(): Promise<void>;
}

const HOST = '127.0.0.1';

const MIME: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.json': 'application/json; charset=utf-8',
  '.woff2': 'font/woff2',
  '.txt': 'text/plain; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
};

function securityHeaders(res: ServerResponse): void {
  res.setHeader('Content-Security-Policy', CONTENT_SECURITY_POLICY);
  res.setHeader('X-Content-Type-Options', 'nosniff');
  res.setHeader('Referrer-Policy', 'no-referrer');
  res.setHeader('X-Frame-Options', 'DENY');
  res.setHeader('Cross-Origin-Opener-Policy', 'same-origin');
  res.setHeader('Cross-Origin-Resource-Policy', 'same-origin');
}

function statusFor(code: BridgeErrorCode): number {
  switch (code) {
    case 'BAD_REQUEST':
    case 'SPEC_INVALID':
      return 400;
    case 'UNAUTHORIZED':
      return 401;
    case 'FORBIDDEN':
      return 403;
    case 'UNKNOWN_CALL':
      return 404;
    case 'INTERNAL':
      return 500;
    default:
      return 422;
  }
}

function sendJson(res: ServerResponse, env: Envelope<unknown>, status?: number): void {
  const body = JSON.stringify(env);
  res.statusCode = status ?? (env.ok ? 200 : statusFor(env.error.code));
  res.setHeader('Content-Type', 'application/json; charset=utf-8');
  res.setHeader('Cache-Control', 'no-store');
  res.end(body);
}

/** Host and Origin must name this server: refuses foreign pages and DNS rebinding. */
export function allowedOrigin(req: IncomingMessage, port: number): string | undefined {
  const own = new Set([`127.0.0.1:${port}`, `localhost:${port}`]);
  const host = req.headers.host;
  if (typeof host !== 'string' || !own.has(host.toLowerCase())) return `Host ${JSON.stringify(host ?? '')} is not this server`;
  const origin = req.headers.origin;
  if (origin !== undefined) {
    const ok = typeof origin === 'string' && [...own].some((h) => origin.toLowerCase() === `http://${h}`);
    if (!ok) return `Origin ${JSON.stringify(origin)} is not this server`;
  }
  const site = req.headers['sec-fetch-site'];
  if (site === 'cross-site') return 'cross-site request';
  return undefined;
}

/** A new access key: 256 random bits, base64url (URL- and header-safe). */
export function newAccessKey(): string {
  return randomBytes(32).toString('base64url');
}

/**
 * The access-key check: the key from `Authorization: Bearer <key>`, or from `?key=` on
 * the event stream only. Both sides are hashed first, so the comparison takes the same
 * time whatever the candidate's length or content (timingSafeEqual needs equal lengths).
 */
export function keyChecker(key: string): (req: IncomingMessage, url: URL) => boolean {
  const want = createHash('sha256').update(key, 'utf8').digest();
  return (req, url) => {
    let given: string | undefined;
    const auth = req.headers.authorization;
    if (typeof auth === 'string' && /^Bearer /i.test(auth)) given = auth.slice(7).trim();
    else if (url.pathname === '/api/events') given = url.searchParams.get('key') ?? undefined;
    const got = createHash('sha256').update(given ?? '', 'utf8').digest();
    return timingSafeEqual(got, want) && given !== undefined;
  };
}

const UNAUTHORIZED = JSON.stringify(
  errorReply('UNAUTHORIZED', 'this server needs its access key', 'open the address `deflator serve` printed (it ends in #key=...), or send the key as Authorization: Bearer <key>'),
);

function sendUnauthorized(res: ServerResponse): void {
  res.statusCode = 401;
  res.setHeader('WWW-Authenticate', 'Bearer realm="deflator"');
  res.setHeader('Content-Type', 'application/json; charset=utf-8');
  res.setHeader('Cache-Control', 'no-store');
  res.setHeader('Connection', 'close');
  res.end(UNAUTHORIZED);
}

class BodyTooLarge extends Error {}

function readBody(req: IncomingMessage, limit: number): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    let over = false;
    req.on('data', (c: Buffer) => {
      if (over) return; // drain the rest so the error reply reaches the caller
      size += c.length;
      if (size > limit) {
        over = true;
        chunks.length = 0;
        reject(new BodyTooLarge());
        return;
      }
      chunks.push(c);
    });
    req.on('end', () => {
      if (!over) resolve(Buffer.concat(chunks).toString('utf8'));
    });
    req.on('error', reject);
  });
}

export function startServer(opts: ServerOptions): Promise<RunningServer> {
  const limit = opts.maxBodyBytes ?? 300 * 1024 * 1024;
  const streams = new Set<ServerResponse>();
  const unsubscribe = opts.subscribe((event) => {
    const line = `data: ${JSON.stringify(event)}\n\n`;
    for (const s of streams) s.write(line);
  });
  const heartbeat = setInterval(() => {
    for (const s of streams) s.write(': keep-alive\n\n');
  }, 15_000);
  heartbeat.unref();
  let port = 0;
  const key = newAccessKey();
  const hasKey = keyChecker(key);
  const staticRoot = opts.staticDir ? path.resolve(opts.staticDir) : undefined;

  async function serveStatic(req: IncomingMessage, res: ServerResponse, pathname: string): Promise<void> {
    if (!staticRoot) {
      res.statusCode = 404;
      res.setHeader('Content-Type', 'text/plain; charset=utf-8');
      res.end('the app is not built: run `npm run build`\n');
      return;
    }
    let rel: string;
    try {
      rel = decodeURIComponent(pathname);
    } catch {
      rel = '\0';
    }
    if (rel.includes('\0')) {
      res.statusCode = 400;
      res.end();
      return;
    }
    if (rel === '/' || rel === '') rel = '/index.html';
    const file = path.resolve(staticRoot, `.${path.posix.normalize(rel)}`);
    if (file !== staticRoot && !file.startsWith(staticRoot + path.sep)) {
      res.statusCode = 404;
      res.end();
      return;
    }
    try {
      const st = await stat(file);
      if (!st.isFile()) throw new Error('not a file');
      const data = await readFile(file);
      res.statusCode = 200;
      res.setHeader('Content-Type', MIME[path.extname(file).toLowerCase()] ?? 'application/octet-stream');
      res.setHeader('Cache-Control', file.endsWith('index.html') ? 'no-cache' : 'max-age=3600');
      res.end(req.method === 'HEAD' ? undefined : data);
    } catch {
      res.statusCode = 404;
      res.setHeader('Content-Type', 'text/plain; charset=utf-8');
      res.end('not found\n');
    }
  }

  async function handle(req: IncomingMessage, res: ServerResponse): Promise<void> {
    securityHeaders(res);
    const refused = allowedOrigin(req, port);
    if (refused) {
      sendJson(res, errorReply('FORBIDDEN', `refused: ${refused}`, `open the app at http://127.0.0.1:${port}/`), 403);
      return;
    }
    const url = new URL(req.url ?? '/', `http://${HOST}:${port}`);
    const pathname = url.pathname;
    if ((pathname === '/api' || pathname.startsWith('/api/')) && !hasKey(req, url)) {
      sendUnauthorized(res);
      return;
    }
    if (pathname === '/api/events') {
      if (req.method !== 'GET') {
        sendJson(res, errorReply('BAD_REQUEST', 'the event stream is read with GET', 'open /api/events with EventSource or GET'), 405);
        return;
      }
      res.writeHead(200, { 'Content-Type': 'text/event-stream; charset=utf-8', 'Cache-Control': 'no-store', Connection: 'keep-alive' });
      res.write('retry: 2000\n\n');
      streams.add(res);
      req.on('close', () => streams.delete(res));
      return;
    }
    if (pathname.startsWith('/api/')) {
      if (req.method !== 'POST') {
        res.setHeader('Allow', 'POST');
        sendJson(res, errorReply('BAD_REQUEST', `${req.method ?? '?'} ${pathname}: bridge calls are POST with a JSON body`, `POST ${pathname} with Content-Type: application/json`), 405);
        return;
      }
      const type = String(req.headers['content-type'] ?? '').split(';')[0].trim().toLowerCase();
      if (type !== 'application/json') {
        sendJson(res, errorReply('BAD_REQUEST', `content type ${JSON.stringify(type)}: bridge calls take application/json`, 'send the request as JSON with Content-Type: application/json'), 415);
        return;
      }
      let body: unknown;
      try {
        const text = await readBody(req, limit);
        body = text.trim() === '' ? undefined : JSON.parse(text);
      } catch (e) {
        if (e instanceof BodyTooLarge) {
          res.setHeader('Connection', 'close');
          sendJson(res, errorReply('BAD_REQUEST', `request body larger than ${Math.round(limit / 1024 / 1024)} MB`, 'import the file by path instead of uploading it'), 413);
        } else {
          sendJson(res, errorReply('BAD_REQUEST', `request body is not JSON: ${e instanceof Error ? e.message : String(e)}`, 'send one JSON object, e.g. {} for calls without arguments'), 400);
        }
        return;
      }
      // a malformed escape (%E0%A4%A) is just an unknown call name, not a server failure
      const rawName = pathname.slice('/api/'.length);
      let name: string;
      try {
        name = decodeURIComponent(rawName);
      } catch {
        name = rawName;
      }
      const taskHeader = req.headers['x-deflator-task'];
      const env = await opts.dispatcher.dispatch(name, body, typeof taskHeader === 'string' ? taskHeader : undefined);
      sendJson(res, env);
      return;
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.statusCode = 405;
      res.setHeader('Allow', 'GET, HEAD');
      res.end();
      return;
    }
    await serveStatic(req, res, pathname);
  }

  const requestTimeout = opts.requestTimeoutMs ?? 120_000;
  const server = createServer({ connectionsCheckingInterval: Math.max(50, Math.min(30_000, Math.floor(requestTimeout / 4))) }, (req, res) => {
    handle(req, res).catch((e: unknown) => {
      if (!res.headersSent) sendJson(res, errorReply('INTERNAL', `server failure: ${e instanceof Error ? e.message : String(e)}`), 500);
      else res.end();
    });
  });
  // keep slow clients from pinning sockets forever (the whole request must arrive in
  // time); the reply has no limit, so long fits finish
  server.requestTimeout = requestTimeout;
  server.headersTimeout = Math.min(30_000, requestTimeout);

  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, HOST, () => {
      server.off('error', reject);
      const addr = server.address();
      port = typeof addr === 'object' && addr !== null ? addr.port : 0;
      resolve({
        url: `http://${HOST}:${port}/`,
        openUrl: `http://${HOST}:${port}/#key=${key}`,
        key,
        port,
        server,
        close: () =>
          new Promise<void>((done) => {
            clearInterval(heartbeat);
            unsubscribe();
            for (const s of streams) s.end();
            streams.clear();
            server.close(() => done());
            server.closeAllConnections();
          }),
      });
    });
  });
}
