import type { Bounds, FieldKind } from '../types.js';

/**
 * The one interface every field source implements (neural network, dense grid, recipe).
 *
 * A field answers batched queries: `points` holds 3 floats per point (x, y, z in metres);
 * `evaluate` returns one value per point, in the field's own units (metres for `sdf`, density units,
 * or occupancy logits). Sources backed by WASM or ONNX are ready when constructed by their
 * async factory; nothing else needs awaiting.
 */
export interface Field {
  /** `sdf`: negative inside. `density`: ≥ 0, inside where above the level. `occupancy`: logit, inside where above the level. */
  readonly kind: FieldKind;
  /** Where the field is defined, metres. */
  readonly bounds: Bounds;
  /** The level the source declares (metadata, sidecar), or undefined when it declares none. */
  readonly defaultLevel: number | undefined;
  /** True when `evaluateColor` returns the field's own color. */
  readonly hasColor: boolean;
  /**
   * An upper bound on |∇value| (metres per metre) that the source can promise, for sdf fields:
   * 1 for exact recipe SDFs. Undefined when the source cannot promise one (neural networks);
   * then the sampler uses the user's `--lipschitz` or its default safety factor.
   */
  readonly lipschitz?: number;
  /**
   * True when each evaluation is dear next to the mesh work (a neural network): the bake then asks for as
   * few points as it can, e.g. with a budget, field normals only at the base level's vertices, with the
   * lattice's own normals guiding decimation (bake-field.ts). Output never depends on timing, so this is
   * the source's declaration, not a measurement.
   */
  readonly costly?: boolean;
  /** Human-readable description of the source (file name, outputs) for reports and `inspect`. */
  readonly description: FieldDescription;
  /**
   * Values at `points` (3 floats per point). Resolves to one float per point, in an array the caller
   * may keep. `points` stays the caller's: a source reads it before its promise settles and keeps no
   * reference to it after (callers reuse one array for batch after batch).
   */
  evaluate(points: Float32Array, signal?: AbortSignal): Promise<Float32Array>;
  /** Linear RGB (0..1) at `points`, 3 floats per point. Only when `hasColor`. */
  evaluateColor?(points: Float32Array, signal?: AbortSignal): Promise<Float32Array>;
  /**
   * The source's own node samples, when it has them (dense grids): what `--on-samples` meshes directly,
   * without resampling onto the octree lattice.
   */
  readonly samples?: GridSamples;
  /** Releases workers, sessions and so on. Optional. */
  dispose?(): Promise<void> | void;
}

/** A dense grid's node samples: values x fastest, then y, then z; node (i, j, k) sits at origin + (i, j, k)·spacing. */
export interface GridSamples {
  values: Float32Array;
  /** Samples per axis [nx, ny, nz]. */
  dims: [number, number, number];
  origin: [number, number, number];
  spacing: [number, number, number];
}

/** What a source says about itself. */
export interface FieldDescription {
  /** `onnx`, `grid`, `recipe`, or another name a source picks. */
  source: string;
  /** File name or other label. */
  name: string;
  /** The model's or file's outputs, e.g. `['sdf', 'color']`. */
  outputs: string[];
  /** Extra facts worth printing (grid shape, opset, ...). */
  details?: Record<string, unknown>;
}

/**
 * Converts a field value to Fieldkiln's signed "outside distance-like" convention used by the sampler
 * and mesher: negative inside, non-negative outside, zero at the level.
 */
export function signedFromValue(kind: FieldKind, value: number, level: number): number {
  return kind === 'sdf' ? value - level : level - value;
}

/** Default level per kind when the source declares none. Density has no universal default. */
export function defaultLevelFor(kind: FieldKind): number | undefined {
  return kind === 'density' ? undefined : 0;
}
