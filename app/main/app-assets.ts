/**
 * Which file answers each URL of the app's protocol. main.ts serves `fieldkiln://app/<path>` with it,
 * and the browser tests serve `http://127.0.0.1:<port>/<path>` with the same mapping, so the window
 * sees the same files either way. Nothing outside these few folders can be reached:
 *
 * | URL path                          | file                                              |
 * |-----------------------------------|---------------------------------------------------|
 * | /renderer/<name>.html, .css       | <root>/app/renderer/<name>  (static, not compiled) |
 * | /renderer/<name>.js               | <root>/build/app/renderer/<name>.js (tsc output)   |
 * | /vendor/three/<name>.js           | <root>/node_modules/three/build/<name>.js          |
 * | /vendor/three/addons/<path>.js    | <root>/node_modules/three/examples/jsm/<path>.js   |
 *
 * No electron import: used by main.ts and by the tests.
 */
import path from 'node:path';

/** Content types of the files the app serves, by extension. */
export const CONTENT_TYPES: Readonly<Record<string, string>> = {
  '.html': 'text/html; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
};

const SAFE_SEGMENT = /^[A-Za-z0-9_][A-Za-z0-9_.-]*$/;

/**
 * Maps a URL path of the app's protocol to a file under `root` (the repository or the packaged
 * app's folder), or null when the path names nothing the app serves.
 *
 * @param urlPath - The URL's pathname, e.g. `/renderer/index.html` (percent-escapes are refused).
 * @param root - Absolute folder holding `app/`, `build/` and `node_modules/`.
 * @example
 * resolveAppAsset('/vendor/three/three.module.js', '/opt/fieldkiln') // → /opt/fieldkiln/node_modules/three/build/three.module.js
 */
export function resolveAppAsset(urlPath: string, root: string): string | null {
  if (typeof urlPath !== 'string' || !urlPath.startsWith('/') || urlPath.length > 300) return null;
  const parts = urlPath.slice(1).split('/');
  if (parts.some((p) => !SAFE_SEGMENT.test(p) || p.includes('..'))) return null;
  const ext = path.extname(parts[parts.length - 1]).toLowerCase();
  if (!(ext in CONTENT_TYPES)) return null;
  const rest = parts.slice(1);
  let file: string | null = null;
  if (parts[0] === 'renderer' && rest.length >= 1) {
    if (ext === '.js') file = path.join(root, 'build', 'app', 'renderer', ...rest);
    else if (rest.length === 1) file = path.join(root, 'app', 'renderer', rest[0]);
  } else if (parts[0] === 'vendor' && parts[1] === 'three' && ext === '.js') {
    if (parts[2] === 'addons' && parts.length >= 4) file = path.join(root, 'node_modules', 'three', 'examples', 'jsm', ...parts.slice(3));
    else if (parts.length === 3) file = path.join(root, 'node_modules', 'three', 'build', parts[2]);
  }
  if (file === null) return null;
  // Belt and braces: the result must stay under root.
  const rel = path.relative(root, file);
  if (rel.startsWith('..') || path.isAbsolute(rel)) return null;
  return file;
}

/** The content type for a served file. */
export function contentTypeOf(file: string): string {
  return CONTENT_TYPES[path.extname(file).toLowerCase()] ?? 'application/octet-stream';
}
