/**
 * Which file, if any, a request path names inside the overlay's folder.
 * Deliberately narrow: plain names of letters, digits, ".", "-" and "_",
 * in subfolders at most, none starting with "." — so "..", "%2e%2e",
 * "%2f", backslashes and hidden files all name nothing — and the real path
 * (symbolic links followed) must still lie inside the folder.
 *
 * @example
 *   staticFile('/app/ui/dist', '/')                  // → '/app/ui/dist/index.html'
 *   staticFile('/app/ui/dist', '/overlay.js')        // → '/app/ui/dist/overlay.js'
 *   staticFile('/app/ui/dist', '/%2e%2e/secret')     // → null
 */
import { realpathSync, statSync } from 'node:fs';
import { extname, join, sep } from 'node:path';

const SAFE_PATH = /^\/(?:[A-Za-z0-9_-][A-Za-z0-9._-]*\/)*[A-Za-z0-9_-][A-Za-z0-9._-]*$/;

export const CONTENT_TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.woff2': 'font/woff2',
  '.map': 'application/json',
};

export const contentType = (file: string): string => CONTENT_TYPES[extname(file).toLowerCase()] ?? 'application/octet-stream';

export function staticFile(root: string, rawPath: string): string | null {
  const path = rawPath === '/' ? '/index.html' : rawPath;
  if (!SAFE_PATH.test(path)) return null;
  try {
    const base = realpathSync(root);
    const real = realpathSync(join(base, ...path.slice(1).split('/')));
    if (!real.startsWith(base + sep) || !statSync(real).isFile()) return null;
    return real;
  } catch {
    return null;
  }
}
