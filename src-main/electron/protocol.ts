/**
 * The app:// scheme's file handler: serves dist/renderer and nothing else, each response
 * with the Content-Security-Policy header.
 */
import { readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { CONTENT_SECURITY_POLICY } from '../../shared/bridge/csp.js';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.json': 'application/json',
  '.woff2': 'font/woff2',
};

/** Maps an app URL to a file under root, or undefined when it would leave root. */
export function resolveAppFile(root: string, url: string): string | undefined {
  let pathname: string;
  try {
    const u = new URL(url);
    if (u.host !== 'app') return undefined;
    pathname = decodeURIComponent(u.pathname);
  } catch {
    return undefined;
  }
  if (pathname.includes('\0')) return undefined;
  if (pathname === '/' || pathname === '') pathname = '/index.html';
  const base = path.resolve(root);
  const file = path.resolve(base, `.${path.posix.normalize(pathname)}`);
  return file.startsWith(base + path.sep) ? file : undefined;
}

export function appProtocolHandler(root: string): (request: Request) => Promise<Response> {
  return async (request) => {
    const file = resolveAppFile(root, request.url);
    const headers = { 'Content-Security-Policy': CONTENT_SECURITY_POLICY, 'X-Content-Type-Options': 'nosniff' };
    if (!file) return new Response('not found', { status: 404, headers });
    try {
      const st = await stat(file);
      if (!st.isFile()) return new Response('not found', { status: 404, headers });
      const body = await readFile(file);
      return new Response(body, { status: 200, headers: { ...headers, 'Content-Type': TYPES[path.extname(file).toLowerCase()] ?? 'application/octet-stream' } });
    } catch {
      return new Response('not found', { status: 404, headers });
    }
  };
}
