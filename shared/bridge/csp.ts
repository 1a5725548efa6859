/**
 * The Content-Security-Policy of the app's pages, the same in Electron (session header
 * and meta tag) and from the loopback server: only the app's own scripts, styles and
 * images; no remote content, no eval, no frames, no plugins.
 * Inline style attributes are allowed (the chart renderer sets them); inline scripts are not.
 */
export const CSP_DIRECTIVES: readonly string[] = [
  "default-src 'none'",
  "script-src 'self'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "base-uri 'none'",
  "form-action 'none'",
  "object-src 'none'",
];

/** As an HTTP header (frame-ancestors only works there). */
export const CONTENT_SECURITY_POLICY = [...CSP_DIRECTIVES, "frame-ancestors 'none'"].join('; ');

/** As the index.html meta tag. */
export const CONTENT_SECURITY_POLICY_META = CSP_DIRECTIVES.join('; ');
