/**
 * The preload: exposes `window.api` (typed in app/shared/window.d.ts), a handful of named functions
 * each bound to one channel. Never ipcRenderer itself, never a generic send.
 *
 * It is a `.cts` file (compiled to CommonJS, preload.cjs) because a sandboxed preload cannot be an ES
 * module, and it may `require` only `electron`: so the channel names are written out here and
 * checked against app/shared/ipc.ts by the type checker (`satisfies`).
 */
import { contextBridge, ipcRenderer, webUtils, type IpcRendererEvent } from 'electron';
import type { CHANNELS as ChannelTable, EVENTS as EventTable } from '../shared/ipc.js';
import type { FieldkilnApi } from '../shared/window.js';

const CHANNELS = {
  openStartup: 'fieldkiln:open-startup',
  openDialog: 'fieldkiln:open-dialog',
  openDropped: 'fieldkiln:open-dropped',
  openRecent: 'fieldkiln:open-recent',
  bake: 'fieldkiln:bake',
  cancel: 'fieldkiln:cancel',
  exportMesh: 'fieldkiln:export',
} as const satisfies typeof ChannelTable;

const EVENTS = {
  progress: 'fieldkiln:progress',
  menu: 'fieldkiln:menu',
} as const satisfies typeof EventTable;

function listen<T>(channel: string, listener: (payload: T) => void): () => void {
  const wrapped = (_event: IpcRendererEvent, payload: T) => listener(payload);
  ipcRenderer.on(channel, wrapped);
  return () => {
    ipcRenderer.removeListener(channel, wrapped);
  };
}

const api: FieldkilnApi = {
  openStartup: () => ipcRenderer.invoke(CHANNELS.openStartup, {}),
  openField: () => ipcRenderer.invoke(CHANNELS.openDialog, {}),
  openDropped: (file: File) => {
    const filePath = webUtils.getPathForFile(file);
    if (!filePath) return Promise.resolve({ ok: false, error: 'that drop holds no file from disk' });
    return ipcRenderer.invoke(CHANNELS.openDropped, { path: filePath });
  },
  openRecent: (filePath: string) => ipcRenderer.invoke(CHANNELS.openRecent, { path: filePath }),
  bake: (request) => ipcRenderer.invoke(CHANNELS.bake, request),
  cancel: () => ipcRenderer.invoke(CHANNELS.cancel, {}),
  exportMesh: (request) => ipcRenderer.invoke(CHANNELS.exportMesh, request),
  onProgress: (listener) => listen(EVENTS.progress, listener),
  onMenu: (listener) => listen(EVENTS.menu, listener),
};

contextBridge.exposeInMainWorld('api', api);
