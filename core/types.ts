/**
 * Shared value types of Fieldkiln's core. Core is platform-free: nothing here touches files,
 * processes or the console; everything from the outside world arrives as an argument.
 */

/** What a field's value means. */
export type FieldKind = 'sdf' | 'density' | 'occupancy';

export const FIELD_KINDS: readonly FieldKind[] = ['sdf', 'density', 'occupancy'];

/** Axis-aligned box in metres: `[xmin, ymin, zmin, xmax, ymax, zmax]`, +Y up. */
export type Bounds = [number, number, number, number, number, number];

/** An indexed triangle mesh: 3 floats per vertex, 3 indices per triangle, optional linear RGB per vertex. */
export interface MeshData {
  positions: Float32Array;
  indices: Uint32Array;
  /** Unit vertex normals, 3 floats per vertex. */
  normals?: Float32Array;
  /** Linear RGB in 0..1, 3 floats per vertex. */
  colors?: Float32Array;
}

/** Where warnings go. Core never calls `console`. */
export interface Logger {
  warn(message: string): void;
  info?(message: string): void;
}

/** Progress callback: `stage` names the pipeline stage, `fraction` is 0..1 within it. */
export type ProgressFn = (stage: string, fraction: number) => void;

/** Thrown for bad input that the user must fix (bad file, bad option). The message names the problem. */
export class FieldkilnError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FieldkilnError';
  }
}

/** Thrown when a job is cancelled through its AbortSignal. */
export class CancelledError extends Error {
  constructor(message = 'cancelled') {
    super(message);
    this.name = 'CancelledError';
  }
}

export function throwIfAborted(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new CancelledError();
}

/** Checks a bounds box: six finite numbers with min < max on every axis. Returns a message or null. */
export function boundsProblem(b: readonly number[]): string | null {
  if (!Array.isArray(b) || b.length !== 6) return `bounds must be six numbers xmin,ymin,zmin,xmax,ymax,zmax (got ${Array.isArray(b) ? b.length : typeof b})`;
  for (let i = 0; i < 6; i++) {
    if (typeof b[i] !== 'number' || !Number.isFinite(b[i])) return `bounds value ${i + 1} is not a finite number (${String(b[i])})`;
  }
  const axes = ['x', 'y', 'z'];
  for (let a = 0; a < 3; a++) {
    if (!(b[a] < b[a + 3])) return `bounds ${axes[a]}min (${b[a]}) must be below ${axes[a]}max (${b[a + 3]}): the box has no volume`;
  }
  return null;
}

/**
 * The box of a flat list of positions (3 floats each): [xmin, ymin, zmin, xmax, ymax, zmax]. Empty (or
 * all-NaN) input gives +Infinity lows and −Infinity highs; NaN coordinates are skipped.
 */
export function positionBounds(p: ArrayLike<number>): Bounds {
  const b: Bounds = [Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity];
  for (let i = 0; i + 2 < p.length; i += 3) {
    for (let a = 0; a < 3; a++) {
      if (p[i + a] < b[a]) b[a] = p[i + a];
      if (p[i + a] > b[a + 3]) b[a + 3] = p[i + a];
    }
  }
  return b;
}
