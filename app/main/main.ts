/**
 * Fieldkiln's desktop app, main process: one window, its menu, the open and save dialogs, the app's
 * own protocol, and the IPC wiring of the request handlers (handlers.ts), each request gated by
 * guard-request.ts (sender, then payload). Security settings come from security.ts.
 *
 * Run: `npm start` (builds with tsc, then `electron build/app/main/main.js [field]`).
 */
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { app, BrowserWindow, dialog, ipcMain, Menu, protocol, session, type IpcMainInvokeEvent, type MenuItemConstructorOptions, type WebPreferences } from 'electron';
import { ELECTRON_CONFIG } from '../../electron.config.js';
import { CHANNELS, EVENTS, type MenuCommand, type ProgressEvent } from '../shared/ipc.js';
import { contentTypeOf, resolveAppAsset } from './app-assets.js';
import { guardRequest } from './guard-request.js';
import { createHandlers, handlerTable } from './handlers.js';
import { APP_ORIGIN, APP_PAGE_PATH, APP_SCHEME, CONTENT_SECURITY_POLICY, isAllowedRequestUrl, isTrustedSender, WEB_PREFERENCES } from './security.js';
import { startupFieldPath } from './startup-field-path.js';

/** The repository root, or the packaged app's folder: main.js sits in build/app/main/. */
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..', '..');

protocol.registerSchemesAsPrivileged([{ scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true } }]);
app.setName(ELECTRON_CONFIG.productName);
if (process.platform === 'win32') app.setAppUserModelId(ELECTRON_CONFIG.appId);

let win: BrowserWindow | undefined;

const handlers = createHandlers({
  demoPath: path.join(root, ELECTRON_CONFIG.demoField),
  startupPath: startupFieldPath(process.argv, app.isPackaged, process.env.INIT_CWD ?? process.cwd()),
  workerPath: path.join(root, ELECTRON_CONFIG.entry.worker),
  emit: (event: ProgressEvent) => {
    if (win && !win.isDestroyed()) win.webContents.send(EVENTS.progress, event);
  },
  chooseOpenPath: async () => {
    const options = {
      title: 'Open a field',
      properties: ['openFile' as const],
      filters: [
        { name: 'Fields (.onnx, .npy, .json)', extensions: ['onnx', 'npy', 'json'] },
        { name: 'All files', extensions: ['*'] },
      ],
    };
    const r = win ? await dialog.showOpenDialog(win, options) : await dialog.showOpenDialog(options);
    return r.canceled || r.filePaths.length === 0 ? null : r.filePaths[0];
  },
  chooseSavePath: async (suggestedName: string) => {
    const options = { title: 'Export the mesh', defaultPath: suggestedName, filters: [{ name: 'glTF binary (.glb)', extensions: ['glb'] }] };
    const r = win ? await dialog.showSaveDialog(win, options) : await dialog.showSaveDialog(options);
    return r.canceled || !r.filePath ? null : r.filePath;
  },
});

/** Wires every request channel to its handler through the gate. */
function wireRequests(): void {
  const table = handlerTable(handlers);
  for (const channel of Object.values(CHANNELS)) {
    const gated = guardRequest(channel, table[channel]);
    ipcMain.handle(channel, (event: IpcMainInvokeEvent, payload: unknown) => {
      const facts = {
        webContentsId: event.sender.id,
        frameUrl: event.senderFrame?.url,
        isMainFrame: event.senderFrame !== null && event.senderFrame === event.sender.mainFrame,
      };
      return gated(isTrustedSender(facts, win && !win.isDestroyed() ? win.webContents.id : undefined), payload);
    });
  }
}

/** Serves the app's own protocol from the few folders app-assets.ts allows, with the CSP header. */
function serveAppProtocol(): void {
  protocol.handle(APP_SCHEME, async (request) => {
    const url = new URL(request.url);
    const file = url.host === 'app' ? resolveAppAsset(url.pathname, root) : null;
    if (!file) return new Response('not found', { status: 404 });
    try {
      const body = await readFile(file);
      return new Response(body, { headers: { 'content-type': contentTypeOf(file), 'content-security-policy': CONTENT_SECURITY_POLICY } });
    } catch {
      return new Response('not found', { status: 404 });
    }
  });
}

/** Denies what the window never needs: permissions, remote requests, navigation, new windows, webviews. */
function lockDown(): void {
  const ses = session.defaultSession;
  ses.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
  ses.setPermissionCheckHandler(() => false);
  ses.webRequest.onBeforeRequest((details, callback) => callback({ cancel: !isAllowedRequestUrl(details.url) }));
  app.on('web-contents-created', (_event, contents) => {
    contents.on('will-navigate', (e) => e.preventDefault());
    contents.on('will-redirect', (e) => e.preventDefault());
    contents.on('will-attach-webview', (e) => e.preventDefault());
    contents.setWindowOpenHandler(() => ({ action: 'deny' }));
  });
}

function sendMenu(command: MenuCommand): void {
  if (win && !win.isDestroyed()) win.webContents.send(EVENTS.menu, { command });
}

function buildMenu(): void {
  const template: MenuItemConstructorOptions[] = [
    ...(process.platform === 'darwin' ? [{ role: 'appMenu' as const }] : []),
    {
      label: 'Field',
      submenu: [
        { label: 'Open field…', accelerator: 'CmdOrCtrl+O', click: () => sendMenu('open') },
        { type: 'separator' },
        { label: 'Export…', accelerator: 'CmdOrCtrl+E', click: () => sendMenu('export') },
        { type: 'separator' },
        process.platform === 'darwin' ? { role: 'close' } : { role: 'quit' },
      ],
    },
    {
      label: 'View',
      submenu: [
        { label: 'Frame the object', accelerator: 'F', click: () => sendMenu('frame') },
        { type: 'separator' },
        { role: 'togglefullscreen' },
        ...(app.isPackaged ? [] : [{ role: 'toggleDevTools' as const }]),
      ],
    },
  ];
  Menu.setApplicationMenu(Menu.buildFromTemplate(template));
}

function createWindow(): void {
  const webPreferences: WebPreferences = { ...WEB_PREFERENCES, preload: path.join(root, ELECTRON_CONFIG.entry.preload) };
  win = new BrowserWindow({
    width: 1440,
    height: 900,
    minWidth: 960,
    minHeight: 600,
    title: ELECTRON_CONFIG.productName,
    backgroundColor: '#17181c',
    show: false,
    webPreferences,
  });
  win.once('ready-to-show', () => win?.show());
  win.on('closed', () => {
    win = undefined;
  });
  void win.loadURL(`${APP_ORIGIN}${APP_PAGE_PATH}`);
}

await app.whenReady();
lockDown();
serveAppProtocol();
wireRequests();
buildMenu();
createWindow();

app.on('activate', () => {
  if (!win) createWindow();
});
app.on('window-all-closed', () => {
  void handlers.dispose().finally(() => app.quit());
});
