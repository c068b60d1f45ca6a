/**
 * Messages between the request handlers (main process) and the bake worker (node:worker_threads),
 * which does all sampling, inference, meshing, export and validation off the main thread.
 *
 * Cancelling: the worker's `workerData.cancel` is a SharedArrayBuffer holding one Int32. A job whose
 * id is at most that number is cancelled. The handlers raise it (Atomics.store) when a newer request
 * replaces an older one or the user presses Stop; the worker reads it (Atomics.load) before every
 * batch of field evaluations and at every progress step, and aborts the job's AbortSignal. A plain
 * message could not do this: it would wait in the queue until the busy worker finished.
 */
import type { BakeRequest, BakeResult, ExportRequest, ExportResult, FieldInfo, ProgressEvent } from '../shared/ipc.js';

/** Data the worker starts with. */
export interface WorkerStartData {
  /** SharedArrayBuffer of 4 bytes: the highest cancelled job id. */
  cancel: SharedArrayBuffer;
}

/** Requests to the worker; each is answered by exactly one `done` message with the same id. */
export type WorkerRequest =
  | { type: 'open'; id: number; path: string }
  | { type: 'bake'; id: number; request: BakeRequest }
  | { type: 'export'; id: number; path: string; request: ExportRequest };

/** What the worker learns about a field; the handlers add the path and the recent list. */
export type FieldFacts = Omit<FieldInfo, 'path' | 'recent'>;

export type WorkerReply =
  | { type: 'progress'; id: number; job: ProgressEvent['job']; stage: string; fraction: number }
  | { type: 'done'; id: number; ok: true; value: FieldFacts | BakeResult | Omit<ExportResult, 'path'> }
  | { type: 'done'; id: number; ok: false; error: string; cancelled: boolean };
