/**
 * Pins the window's security settings (values imported from security.ts, where main.ts reads them),
 * after the checklist in Electron's docs/tutorial/security.md: isolation, sandbox, no Node, a strict
 * CSP, content only from the app's protocol.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  APP_ORIGIN,
  APP_PAGE_PATH,
  CONTENT_SECURITY_POLICY,
  IMPORT_MAP_HASH,
  isAllowedRequestUrl,
  isAppUrl,
  isTrustedSender,
  WEB_PREFERENCES,
} from '../../../app/main/security.js';
import { repoRoot } from '../app-build.js';

const indexHtml = readFileSync(path.join(repoRoot, 'app', 'renderer', 'index.html'), 'utf8');
const mainSource = readFileSync(path.join(repoRoot, 'app', 'main', 'main.ts'), 'utf8');

describe('webPreferences', () => {
  it('are exactly the hardened set, each written out', () => {
    // Electron security checklist items 2–4 (Node off, isolation on, sandbox on) plus the settings
    // that must never be loosened: webSecurity, insecure content, experimental features, <webview>.
    expect(WEB_PREFERENCES).toStrictEqual({
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
    });
  });

  it('are what main.ts gives the window (only the preload path is added)', () => {
    expect(mainSource).toContain("from './security.js'");
    expect(mainSource).toMatch(/webPreferences: WebPreferences = \{ \.\.\.WEB_PREFERENCES, preload: /);
    // Nothing else in main.ts sets a preference that the pinned set covers.
    for (const key of Object.keys(WEB_PREFERENCES)) expect(mainSource).not.toMatch(new RegExp(`\\b${key}\\s*:`));
  });
});

describe('Content-Security-Policy', () => {
  it('is exactly the strict policy', () => {
    expect(CONTENT_SECURITY_POLICY).toBe(
      "default-src 'none'; script-src 'self' 'sha256-qqgzYgHtQm/oy1x+743xkytb6Ey6sMl436Yh2aIpAsQ='; style-src 'self'; img-src 'self'; " +
        "connect-src 'none'; font-src 'none'; object-src 'none'; media-src 'none'; frame-src 'none'; worker-src 'none'; " +
        "base-uri 'none'; form-action 'none'",
    );
    expect(CONTENT_SECURITY_POLICY).not.toMatch(/unsafe-inline|unsafe-eval|https?:|\*|data:|blob:/);
  });

  it('is repeated word for word in index.html', () => {
    const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(indexHtml);
    expect(meta?.[1]).toBe(CONTENT_SECURITY_POLICY);
  });

  it("admits the page's one inline script, its import map, by its SHA-256 (CSP Level 3 hash-source)", () => {
    const inline = [...indexHtml.matchAll(/<script(?![^>]*\bsrc=)([^>]*)>([\s\S]*?)<\/script>/g)];
    expect(inline.map((m) => m[1].trim())).toEqual(['type="importmap"']);
    const digest = createHash('sha256').update(inline[0][2], 'utf8').digest('base64');
    expect(IMPORT_MAP_HASH).toBe(`sha256-${digest}`);
    // The map names three and its addons only, both served by the app itself.
    expect(JSON.parse(inline[0][2])).toEqual({ imports: { three: '../vendor/three/three.module.js', 'three/addons/': '../vendor/three/addons/' } });
  });

  it('is sent as a header by the app protocol', () => {
    expect(mainSource).toMatch(/'content-security-policy': CONTENT_SECURITY_POLICY/);
  });
});

describe('senders and requests', () => {
  const page = `${APP_ORIGIN}${APP_PAGE_PATH}`;

  it('trusts only the main frame of its own window showing an app page', () => {
    expect(isTrustedSender({ webContentsId: 3, frameUrl: page, isMainFrame: true }, 3)).toBe(true);
    expect(isTrustedSender({ webContentsId: 4, frameUrl: page, isMainFrame: true }, 3)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: page, isMainFrame: false }, 3)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: undefined, isMainFrame: true }, 3)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'https://example.com/', isMainFrame: true }, 3)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: 'file:///etc/passwd', isMainFrame: true }, 3)).toBe(false);
    expect(isTrustedSender({ webContentsId: 3, frameUrl: page, isMainFrame: true }, undefined)).toBe(false);
  });

  it('recognises app URLs by scheme and host, not by prefix', () => {
    expect(isAppUrl(page)).toBe(true);
    expect(isAppUrl('fieldkiln://app.evil.com/renderer/index.html')).toBe(false);
    expect(isAppUrl('fieldkiln://other/renderer/index.html')).toBe(false);
    expect(isAppUrl('not a url')).toBe(false);
  });

  it('lets the window load nothing remote', () => {
    expect(isAllowedRequestUrl(`${APP_ORIGIN}/vendor/three/three.module.js`)).toBe(true);
    for (const url of ['https://cdn.example.com/three.js', 'http://127.0.0.1/', 'file:///etc/hosts', 'ws://x/', 'data:text/html,hi', 'ftp://x/y']) {
      expect(isAllowedRequestUrl(url), url).toBe(false);
    }
  });

  it('main.ts denies navigation, redirects, webviews, new windows and permissions', () => {
    for (const needle of [
      "contents.on('will-navigate', (e) => e.preventDefault())",
      "contents.on('will-redirect', (e) => e.preventDefault())",
      "contents.on('will-attach-webview', (e) => e.preventDefault())",
      "contents.setWindowOpenHandler(() => ({ action: 'deny' }))",
      'setPermissionRequestHandler((_wc, _permission, callback) => callback(false))',
      'callback({ cancel: !isAllowedRequestUrl(details.url) })',
    ]) {
      expect(mainSource).toContain(needle);
    }
  });
});
