/**
 * Runs the app's window without Electron: the built renderer is served by a node:http server on
 * 127.0.0.1 with the same URL → file mapping and CSP as the app's own protocol, opened in Debian's
 * Chromium through playwright-core, and `window.api` is provided by binding the REAL request
 * handlers (app/main/handlers.ts, behind the same guard as main.ts) with `page.exposeFunction`. So
 * the real bake worker and the real core run; the only stand-ins are the two file dialogs, which
 * answer with the path a test sets (as a user picking that file would).
 *
 * Launch flags: ../shared/DEPENDENCIES.md §7.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { contentTypeOf, resolveAppAsset } from '../../../app/main/app-assets.js';
import { guardRequest } from '../../../app/main/guard-request.js';
import { createHandlers, handlerTable, type Handlers } from '../../../app/main/handlers.js';
import { APP_PAGE_PATH, CONTENT_SECURITY_POLICY } from '../../../app/main/security.js';
import { CHANNELS, type Channel } from '../../../app/shared/ipc.js';
import { builtWorker, repoRoot } from '../app-build.js';

/** Debian's Chromium, or the one FIELDKILN_CHROMIUM names. */
export const chromiumPath = process.env.FIELDKILN_CHROMIUM ?? '/usr/bin/chromium';
export const hasChromium = existsSync(chromiumPath);

/** DEPENDENCIES.md §7: the flags three.js r187 rendered WebGL2 with (SwiftShader), headless, offline. */
export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--disable-quic',
  '--no-first-run',
];

export const demoPath = path.join(repoRoot, 'assets', 'demo', 'lantern-post.recipe.json');

/** The preload's `window.api`, rebuilt over the bound handlers (one exposed function per channel). */
const INIT_SCRIPT = `(() => {
  const listeners = { progress: new Set(), menu: new Set() };
  window.__fieldkilnEmit = (kind, event) => { for (const l of listeners[kind]) l(event); };
  const call = (name, payload) => window['__fieldkiln_' + name](payload);
  window.api = {
    openStartup: () => call('openStartup', {}),
    openField: () => call('openDialog', {}),
    openDropped: async () => ({ ok: false, error: 'dropping files needs the Electron window' }),
    openRecent: (path) => call('openRecent', { path }),
    bake: (request) => call('bake', request),
    cancel: () => call('cancel', {}),
    exportMesh: (request) => call('exportMesh', request),
    onProgress: (l) => { listeners.progress.add(l); return () => listeners.progress.delete(l); },
    onMenu: (l) => { listeners.menu.add(l); return () => listeners.menu.delete(l); },
  };
})();`;

/** The channel → exposed-function name used by INIT_SCRIPT. */
const BINDINGS: Record<Channel, string> = {
  [CHANNELS.openStartup]: 'openStartup',
  [CHANNELS.openDialog]: 'openDialog',
  [CHANNELS.openDropped]: 'openDropped',
  [CHANNELS.openRecent]: 'openRecent',
  [CHANNELS.bake]: 'bake',
  [CHANNELS.cancel]: 'cancel',
  [CHANNELS.exportMesh]: 'exportMesh',
};

export interface AppBrowser {
  context: BrowserContext;
  baseUrl: string;
  /** Opens a fresh window with its own handlers (and bake worker). */
  openWindow(): Promise<AppWindow>;
  close(): Promise<void>;
}

export interface AppWindow {
  page: Page;
  handlers: Handlers;
  /** What the open and save dialogs answer next (null: the user closes the dialog). */
  dialogs: { open: string | null; save: string | null };
  /** Console errors and page errors seen so far. */
  errors: string[];
  close(): Promise<void>;
}

/** Starts the server and Chromium. */
export async function startAppBrowser(): Promise<AppBrowser> {
  const server = http.createServer((req, res) => {
    const url = new URL(req.url ?? '/', 'http://127.0.0.1');
    const file = resolveAppAsset(url.pathname, repoRoot);
    if (!file || !existsSync(file)) {
      res.writeHead(404).end('not found');
      return;
    }
    res.writeHead(200, { 'content-type': contentTypeOf(file), 'content-security-policy': CONTENT_SECURITY_POLICY, 'cache-control': 'no-store' });
    res.end(readFileSync(file));
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as { port: number }).port;
  const profile = mkdtempSync(path.join(tmpdir(), 'fieldkiln-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: chromiumPath,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport: { width: 1280, height: 800 },
  });
  const baseUrl = `http://127.0.0.1:${port}`;
  const windows = new Set<AppWindow>();

  const openWindow = async (): Promise<AppWindow> => {
    const page = await context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
    page.on('console', (m) => {
      // The server has no favicon; Chromium asks for one.
      if (m.type() === 'error' && !/favicon|Failed to load resource/.test(m.text())) errors.push(`console: ${m.text()}`);
    });
    const dialogs: AppWindow['dialogs'] = { open: null, save: null };
    const handlers = createHandlers({
      demoPath,
      workerPath: builtWorker,
      emit: (event) => {
        page.evaluate((e) => (window as unknown as { __fieldkilnEmit(k: string, e: unknown): void }).__fieldkilnEmit('progress', e), event).catch(() => {});
      },
      chooseOpenPath: async () => dialogs.open,
      chooseSavePath: async () => dialogs.save,
    });
    const table = handlerTable(handlers);
    for (const channel of Object.values(CHANNELS)) {
      const gated = guardRequest(channel, table[channel]);
      // The page is the app's own window: the sender check passes, the payload check runs.
      await page.exposeFunction(`__fieldkiln_${BINDINGS[channel]}`, (payload: unknown) => gated(true, payload));
    }
    await page.addInitScript(INIT_SCRIPT);
    await page.goto(`${baseUrl}${APP_PAGE_PATH}`);
    const win: AppWindow = {
      page,
      handlers,
      dialogs,
      errors,
      close: async () => {
        windows.delete(win);
        await page.close().catch(() => {});
        await handlers.dispose();
      },
    };
    windows.add(win);
    return win;
  };

  return {
    context,
    baseUrl,
    openWindow,
    close: async () => {
      for (const w of [...windows]) await w.close();
      await context.close();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/**
 * Reads the preview canvas's pixels in the page and returns how much they vary: the standard
 * deviation of luminance (0..255) and the share of pixels that differ from the background color.
 */
export async function canvasStats(page: Page): Promise<{ luminanceStd: number; nonBackground: number; width: number; height: number }> {
  return page.evaluate(() => {
    const c = document.getElementById('view') as HTMLCanvasElement;
    const t = document.createElement('canvas');
    t.width = c.width;
    t.height = c.height;
    const g = t.getContext('2d')!;
    g.drawImage(c, 0, 0);
    const d = g.getImageData(0, 0, t.width, t.height).data;
    // Background: the top-left pixel row is all scene background in every view (toolbar is HTML).
    const br = d[0], bg = d[1], bb = d[2];
    let sum = 0, sum2 = 0, diff = 0;
    const n = d.length / 4;
    for (let i = 0; i < d.length; i += 4) {
      const y = 0.2126 * d[i] + 0.7152 * d[i + 1] + 0.0722 * d[i + 2];
      sum += y;
      sum2 += y * y;
      if (Math.abs(d[i] - br) + Math.abs(d[i + 1] - bg) + Math.abs(d[i + 2] - bb) > 24) diff++;
    }
    const mean = sum / n;
    return { luminanceStd: Math.sqrt(Math.max(0, sum2 / n - mean * mean)), nonBackground: diff / n, width: t.width, height: t.height };
  });
}

/** A cheap fingerprint of the canvas pixels (FNV-1a over a 1-in-97 sample), to tell two frames apart. */
export async function canvasFingerprint(page: Page): Promise<string> {
  return page.evaluate(() => {
    const c = document.getElementById('view') as HTMLCanvasElement;
    const t = document.createElement('canvas');
    t.width = c.width;
    t.height = c.height;
    const g = t.getContext('2d')!;
    g.drawImage(c, 0, 0);
    const d = g.getImageData(0, 0, t.width, t.height).data;
    let h = 0x811c9dc5;
    for (let i = 0; i < d.length; i += 97) {
      h ^= d[i];
      h = Math.imul(h, 0x01000193) >>> 0;
    }
    return h.toString(16);
  });
}
