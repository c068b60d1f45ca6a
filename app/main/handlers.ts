/**
 * The desktop app's request handlers: open a field, bake a preview or a full mesh, cancel, export.
 * main.ts wires them to ipcMain (after checking the sender and the payload); the browser tests bind
 * the very same functions into a page. So this module imports nothing from electron: the dialogs
 * come in as functions.
 *
 * Files: the handlers touch only paths the user chose (dialog, drop, command line, the bundled
 * demo), kept in a {@link PathGrants}; anything else the window names is refused.
 *
 * Work: everything heavy runs in one bake worker (bake-worker.ts, node:worker_threads) that calls
 * core. A newer request cancels the older one (see worker-messages.ts for how), and a worker that
 * dies is replaced on the next request, re-opening the current field.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type {
  BakeRequest,
  BakeResult,
  EmptyRequest,
  ExportRequest,
  ExportResult,
  FieldInfo,
  OpenPathRequest,
  ProgressEvent,
  Reply,
} from '../shared/ipc.js';
import { CHANNELS, type Channel } from '../shared/ipc.js';
import { PathGrants } from './path-grants.js';
import type { FieldFacts, WorkerReply, WorkerRequest, WorkerStartData } from './worker-messages.js';

/** What the handlers need from their host (Electron's main process, or a test). */
export interface HandlerOptions {
  /** The bundled demo field, opened when nothing else is named. */
  demoPath: string;
  /** A field named on the command line (already absolute), opened at start instead of the demo. */
  startupPath?: string;
  /** The compiled bake worker. Default: `bake-worker.js` next to this module. */
  workerPath?: string;
  /** Sends a progress event to the window. */
  emit(event: ProgressEvent): void;
  /** Shows the open dialog; resolves to an absolute path, or null when the user closed it. */
  chooseOpenPath(): Promise<string | null>;
  /** Shows the save dialog with a suggested file name; resolves to an absolute path, or null. */
  chooseSavePath(suggestedName: string): Promise<string | null>;
}

/** The handlers, one per request channel, plus `dispose`. */
export interface Handlers {
  openStartup(request: EmptyRequest): Promise<Reply<FieldInfo>>;
  openDialog(request: EmptyRequest): Promise<Reply<FieldInfo | null>>;
  openDropped(request: OpenPathRequest): Promise<Reply<FieldInfo>>;
  openRecent(request: OpenPathRequest): Promise<Reply<FieldInfo>>;
  bake(request: BakeRequest): Promise<Reply<BakeResult>>;
  cancel(request: EmptyRequest): Promise<Reply<null>>;
  exportMesh(request: ExportRequest): Promise<Reply<ExportResult | null>>;
  /** The paths the user chose, for tests and diagnostics. */
  readonly grants: PathGrants;
  /** Stops the worker. */
  dispose(): Promise<void>;
}

/** Most entries in the window's "opened before" list. */
export const RECENT_LIMIT = 6;

interface Pending {
  resolve(reply: WorkerReply & { type: 'done' }): void;
  job: ProgressEvent['job'];
}

/**
 * Creates the handlers. Nothing starts until the first request.
 *
 * @example
 * const handlers = createHandlers({ demoPath, emit: (e) => win.webContents.send(EVENTS.progress, e), chooseOpenPath, chooseSavePath });
 * const reply = await handlers.openStartup({});
 */
export function createHandlers(options: HandlerOptions): Handlers {
  const grants = new PathGrants();
  const demoPath = grants.grant(options.demoPath, 'read');
  const startupPath = options.startupPath ? grants.grant(options.startupPath, 'read') : undefined;
  const workerPath = options.workerPath ?? fileURLToPath(new URL('./bake-worker.js', import.meta.url));
  const cancelBuffer = new SharedArrayBuffer(4);
  const cancelFlag = new Int32Array(cancelBuffer);
  const pending = new Map<number, Pending>();
  const recent: { name: string; path: string }[] = [];
  let worker: Worker | undefined;
  /** The field the worker has open (re-opened in a new worker after a crash). */
  let openPath: string | undefined;
  let nextId = 1;
  let lastJobId = 0;

  const startWorker = (): Worker => {
    const data: WorkerStartData = { cancel: cancelBuffer };
    const w = new Worker(workerPath, { workerData: data });
    w.on('message', (m: WorkerReply) => {
      if (m.type === 'progress') {
        options.emit({ jobId: m.id, job: m.job, stage: m.stage, fraction: m.fraction });
        return;
      }
      const p = pending.get(m.id);
      if (p) {
        pending.delete(m.id);
        // An idle worker must not keep the process alive; a busy one must.
        if (pending.size === 0) w.unref();
        p.resolve(m);
      }
    });
    const fail = (why: string) => {
      if (worker !== w) return;
      worker = undefined;
      for (const [id, p] of pending) p.resolve({ type: 'done', id, ok: false, cancelled: false, error: `the baking helper stopped unexpectedly (${why}); try again` });
      pending.clear();
    };
    w.on('error', (e) => fail(e instanceof Error ? e.message : String(e)));
    w.on('exit', (code) => fail(`exit code ${code}`));
    w.unref();
    return w;
  };

  /** Sends a request to the worker (starting it, and re-opening the field, when needed). */
  const ask = async (build: (id: number) => WorkerRequest, job: ProgressEvent['job']): Promise<WorkerReply & { type: 'done' }> => {
    if (!worker) {
      worker = startWorker();
      if (openPath && job !== 'open') {
        const reopen = await send({ type: 'open', id: nextId++, path: openPath }, 'open');
        if (!reopen.ok) return reopen;
      }
    }
    const id = nextId++;
    return send(build(id), job);
  };

  const send = (msg: WorkerRequest, job: ProgressEvent['job']): Promise<WorkerReply & { type: 'done' }> =>
    new Promise((resolve) => {
      pending.set(msg.id, { resolve, job });
      lastJobId = Math.max(lastJobId, msg.id);
      worker!.ref();
      worker!.postMessage(msg);
    });

  /** Cancels every job sent so far. */
  const cancelAll = () => Atomics.store(cancelFlag, 0, lastJobId);

  const open = async (filePath: string): Promise<Reply<FieldInfo>> => {
    if (!grants.allows(filePath, 'read')) return refuse(filePath);
    cancelAll();
    const reply = await ask((id) => ({ type: 'open', id, path: filePath }), 'open');
    if (!reply.ok) return { ok: false, error: reply.error };
    openPath = filePath;
    const facts = reply.value as FieldFacts;
    const i = recent.findIndex((r) => r.path === filePath);
    if (i >= 0) recent.splice(i, 1);
    recent.unshift({ name: facts.name, path: filePath });
    recent.length = Math.min(recent.length, RECENT_LIMIT);
    return { ok: true, value: { ...facts, path: filePath, recent: recent.map((r) => ({ ...r })) } };
  };

  const handlers: Handlers = {
    grants,

    openStartup: async () => open(startupPath ?? demoPath),

    openDialog: async () => {
      const chosen = await options.chooseOpenPath();
      if (chosen === null) return { ok: true, value: null };
      return open(grants.grant(chosen, 'read'));
    },

    openDropped: async ({ path: dropped }) => open(grants.grant(dropped, 'read')),

    openRecent: async ({ path: wanted }) => open(wanted),

    bake: async (request) => {
      cancelAll(); // a newer request cancels the older one
      const reply = await ask((id) => ({ type: 'bake', id, request }), request.quality);
      if (!reply.ok) return { ok: false, error: reply.error, ...(reply.cancelled ? { cancelled: true } : {}) };
      return { ok: true, value: reply.value as BakeResult };
    },

    cancel: async () => {
      cancelAll();
      return { ok: true, value: null };
    },

    exportMesh: async (request) => {
      const suggested = `${request.name.replace(/[^A-Za-z0-9_.-]+/g, '-') || 'mesh'}.${request.format}`;
      const chosen = await options.chooseSavePath(suggested);
      if (chosen === null) return { ok: true, value: null };
      const target = grants.grant(withExtension(chosen, request.format), 'write');
      cancelAll();
      const reply = await ask((id) => ({ type: 'export', id, path: target, request }), 'export');
      if (!reply.ok) return { ok: false, error: reply.error, ...(reply.cancelled ? { cancelled: true } : {}) };
      return { ok: true, value: { path: target, ...(reply.value as Omit<ExportResult, 'path'>) } };
    },

    dispose: async () => {
      cancelAll();
      const w = worker;
      worker = undefined;
      for (const [id, p] of pending) p.resolve({ type: 'done', id, ok: false, cancelled: true, error: 'stopped' });
      pending.clear();
      await w?.terminate();
    },
  };
  return handlers;
}

/** The handler of each channel, for wiring (main.ts) and binding (tests). */
export function handlerTable(h: Handlers): Record<Channel, (payload: never) => Promise<Reply<unknown>>> {
  return {
    [CHANNELS.openStartup]: h.openStartup,
    [CHANNELS.openDialog]: h.openDialog,
    [CHANNELS.openDropped]: h.openDropped,
    [CHANNELS.openRecent]: h.openRecent,
    [CHANNELS.bake]: h.bake,
    [CHANNELS.cancel]: h.cancel,
    [CHANNELS.exportMesh]: h.exportMesh,
  };
}

function refuse(filePath: string): Reply<never> {
  return { ok: false, error: `refused to open ${path.basename(filePath)}: Fieldkiln opens only files you chose in this session (open it with Open field… or drop it on the window)` };
}

function withExtension(filePath: string, format: string): string {
  return path.extname(filePath).toLowerCase() === `.${format}` ? filePath : `${filePath}.${format}`;
}
