/**
 * The window's security settings, in one place so main.ts reads them and a unit test pins them
 * (test/app/main/security.test.ts). Follows the checklist in Electron's docs/tutorial/security.md:
 * isolation and sandbox on, Node off, a strict Content-Security-Policy, content only from the app's
 * own protocol, navigation and new windows denied, every IPC sender checked.
 *
 * No electron import here: the browser tests serve the renderer with the same CSP.
 */

/** Scheme of the app's own protocol: the window's content comes only from here, never from file:// or the network. */
export const APP_SCHEME = 'fieldkiln';

/** Origin of the app's pages. */
export const APP_ORIGIN = `${APP_SCHEME}://app`;

/** The window's page, under the app's protocol (see app-assets.ts for the URL → file mapping). */
export const APP_PAGE_PATH = '/renderer/index.html';

/**
 * `webPreferences` of the main window, each security setting written out even where it is
 * Electron's default. `preload` is added by main.ts (it is a file path).
 */
export const WEB_PREFERENCES = {
  contextIsolation: true,
  sandbox: true,
  nodeIntegration: false,
  nodeIntegrationInWorker: false,
  nodeIntegrationInSubFrames: false,
  webSecurity: true,
  allowRunningInsecureContent: false,
  experimentalFeatures: false,
  webviewTag: false,
  navigateOnDragDrop: false,
  spellcheck: false,
} as const;

/**
 * SHA-256 of the one inline script of index.html, its import map (base64, as CSP wants it).
 * An import map is not executable, but Chromium checks inline import maps against `script-src`;
 * the hash admits exactly that text and nothing else. A test recomputes it from index.html.
 */
export const IMPORT_MAP_HASH = 'sha256-qqgzYgHtQm/oy1x+743xkytb6Ey6sMl436Yh2aIpAsQ=';

/**
 * The Content-Security-Policy of the window: scripts only from the app itself (plus the import map,
 * by hash), no inline or eval'd code, styles only from the app, nothing fetched from anywhere, no
 * plugins, no forms, no <base>. Sent as a response header by the app's protocol and repeated in a
 * <meta> tag of index.html (a test checks both say the same).
 */
export const CONTENT_SECURITY_POLICY = [
  "default-src 'none'",
  `script-src 'self' '${IMPORT_MAP_HASH}'`,
  "style-src 'self'",
  "img-src 'self'",
  "connect-src 'none'",
  "font-src 'none'",
  "object-src 'none'",
  "media-src 'none'",
  "frame-src 'none'",
  "worker-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
].join('; ');

/** What main.ts knows about a message's sender. */
export interface SenderFacts {
  /** `event.sender.id`. */
  webContentsId: number;
  /** `event.senderFrame?.url`; undefined when the frame is gone. */
  frameUrl: string | undefined;
  /** True when the sending frame is the top frame. */
  isMainFrame: boolean;
}

/**
 * True when a message comes from the app's own window: the same webContents, its top frame, and a
 * page of the app's protocol. Everything else is dropped before the payload is even looked at.
 */
export function isTrustedSender(sender: SenderFacts, windowWebContentsId: number | undefined): boolean {
  if (windowWebContentsId === undefined || sender.webContentsId !== windowWebContentsId) return false;
  if (!sender.isMainFrame || sender.frameUrl === undefined) return false;
  return isAppUrl(sender.frameUrl);
}

/** True when `url` is a page of the app's own protocol. */
export function isAppUrl(url: string): boolean {
  let u: URL;
  try {
    u = new URL(url);
  } catch {
    return false;
  }
  return u.protocol === `${APP_SCHEME}:` && u.host === 'app';
}

/**
 * Requests the window may make: its own protocol only (and devtools' own pages in development).
 * Everything else (http, https, file, ws, ftp, data …) is cancelled: no remote content.
 */
export function isAllowedRequestUrl(url: string): boolean {
  if (isAppUrl(url)) return true;
  return url.startsWith('devtools://');
}
