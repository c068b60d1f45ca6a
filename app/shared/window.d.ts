/**
 * Types `window.api`: the few named functions the preload (app/preload/preload.cts) exposes to the
 * window. Each maps to one channel of app/shared/ipc.ts; there is no generic send.
 */
import type { BakeRequest, BakeResult, ExportRequest, ExportResult, FieldInfo, MenuEvent, ProgressEvent, Reply } from './ipc.js';

export interface FieldkilnApi {
  /** Opens the field named on the command line, else the bundled demo. */
  openStartup(): Promise<Reply<FieldInfo>>;
  /** Shows the open dialog; `value` is null when the user closed it without choosing. */
  openField(): Promise<Reply<FieldInfo | null>>;
  /** Opens a file dropped on the window (the preload turns the File into its path). */
  openDropped(file: File): Promise<Reply<FieldInfo>>;
  /** Re-opens a field opened earlier in this session (one of `FieldInfo.recent`). */
  openRecent(path: string): Promise<Reply<FieldInfo>>;
  /** Bakes the open field; a newer bake cancels an older one (which answers `cancelled`). */
  bake(request: BakeRequest): Promise<Reply<BakeResult>>;
  /** Stops the running job. */
  cancel(): Promise<Reply<null>>;
  /** Shows the save dialog and writes the mesh; `value` is null when the user closed the dialog. */
  exportMesh(request: ExportRequest): Promise<Reply<ExportResult | null>>;
  /** Calls `listener` with each progress event; returns a function that stops listening. */
  onProgress(listener: (event: ProgressEvent) => void): () => void;
  /** Calls `listener` when a menu item is chosen; returns a function that stops listening. */
  onMenu(listener: (event: MenuEvent) => void): () => void;
}

declare global {
  interface Window {
    api: FieldkilnApi;
  }
}
