/**
 * The desktop app's IPC contract: channel names, payload types, and one small hand-written
 * validator per channel. The main process runs the validator on every payload before acting on it;
 * the preload and the renderer see only the types.
 *
 * This file has no runtime imports, so the renderer, the sandboxed preload (which can't load local
 * modules) and the main process can all depend on it. Limits that mirror core's (depth range) are
 * pinned against core by test/app/shared/ipc.test.ts.
 *
 * Rules every validator follows: a payload is a plain object (prototype `Object.prototype` or null)
 * with exactly the listed keys (unknown keys are refused, so nothing unexpected reaches a handler);
 * numbers are finite and within range; strings are short and free of control characters.
 */
import type { Bounds } from '../../core/types.js';

/** Requests from the window (renderer → main, `invoke`/`handle`). */
export const CHANNELS = {
  /** Opens the field named on the command line, or the bundled demo. Payload: {@link EmptyRequest}. */
  openStartup: 'fieldkiln:open-startup',
  /** Shows the open dialog and opens the chosen field. Payload: {@link EmptyRequest}. */
  openDialog: 'fieldkiln:open-dialog',
  /** Opens a file dropped on the window. Payload: {@link OpenPathRequest}. */
  openDropped: 'fieldkiln:open-dropped',
  /** Re-opens a field opened earlier in this session. Payload: {@link OpenPathRequest}. */
  openRecent: 'fieldkiln:open-recent',
  /** Bakes the open field. Payload: {@link BakeRequest}. */
  bake: 'fieldkiln:bake',
  /** Stops the running bake, if any. Payload: {@link EmptyRequest}. */
  cancel: 'fieldkiln:cancel',
  /** Shows the save dialog and writes the mesh. Payload: {@link ExportRequest}. */
  exportMesh: 'fieldkiln:export',
} as const;

/** Events from the main process to the window (`send`/`on`). */
export const EVENTS = {
  /** Progress of the running job. Payload: {@link ProgressEvent}. */
  progress: 'fieldkiln:progress',
  /** A menu item was chosen. Payload: {@link MenuEvent}. */
  menu: 'fieldkiln:menu',
} as const;

export type Channel = (typeof CHANNELS)[keyof typeof CHANNELS];
export type EventChannel = (typeof EVENTS)[keyof typeof EVENTS];

/** Limits of the payloads (checked by the validators). */
export const LIMITS = {
  /** Finest octree level a request may ask for: core's SAMPLE_OCTREE_DEFAULTS.minDepth..maxDepth. */
  minDepth: 1,
  maxDepth: 12,
  /** Longest path accepted, in UTF-16 code units (Linux PATH_MAX is 4096 bytes). */
  maxPathLength: 4096,
  /** Longest mesh name, characters. */
  maxNameLength: 64,
  /** Longest method name, characters. */
  maxMethodLength: 40,
  /** Largest triangle budget (0 = no budget). */
  maxBudget: 50_000_000,
  /** Most lighter copies (LODs) a request may ask for. */
  maxLods: 8,
  /** Largest |level| accepted, field units: anything beyond is a typo, not a level. */
  maxAbsLevel: 1e9,
  /** Largest |coordinate| of sampling bounds, metres. */
  maxAbsCoordinate: 1e6,
  /** Largest Lipschitz bound, metres per metre. */
  maxLipschitz: 1e6,
  /** Texture edge range, texels (a power of two): core's TEXTURE_DEFAULTS.minSize..maxSize. */
  minTextureSize: 64,
  maxTextureSize: 4096,
} as const;

// ---------------------------------------------------------------------------------------------
// Requests.

/** A request without data. */
export type EmptyRequest = Record<string, never>;

/** A path the main process checks against the paths the user chose (drop or earlier dialog). */
export interface OpenPathRequest {
  /** Absolute path. */
  path: string;
}

/** Preview: a shallower, faster bake while a slider moves. Full: the depth asked for. */
export type BakeQuality = 'preview' | 'full';

/** The settings of a bake, as the window's controls hold them. */
export interface BakeSettings {
  /** Iso-level, field units. */
  level: number;
  /** Finest octree level (2^depth cells along the longest side). */
  depth: number;
  /** Meshing method, one of the field info's `methods`. */
  method: string;
  /** Largest triangle count wanted; 0 = no budget. Passed to core only when it supports it. */
  budget: number;
  /** Lighter copies (LODs) to make; 0 = none. Passed to core only when it supports it. */
  lods: number;
  /** Pieces whose area is below this share (0..1) of the largest piece's are dropped; 0 = keep all. Passed to core only when it supports it. */
  minPart: number;
  /** Vertex normals from the field's gradient (`field`) or from the mesh (`mesh`), when core offers the choice. */
  normals: 'field' | 'mesh';
  /** Region to sample, metres (the CLI's --bounds); null = the field's own. */
  bounds: Bounds | null;
  /** Gradient bound for skipping empty space in an SDF (--lipschitz); null = the field's own promise or core's default. */
  lipschitz: number | null;
  /** First level refined for density/occupancy fields (--start-depth); null = core's default. */
  startDepth: number | null;
  /** What NaN/±Inf samples mean (--nonfinite): stop with an error, or count as outside. */
  nonfinite: 'error' | 'outside';
}

/** The keys of {@link BakeSettings}, in order. */
export const BAKE_SETTING_KEYS = ['level', 'depth', 'method', 'budget', 'lods', 'minPart', 'normals', 'bounds', 'lipschitz', 'startDepth', 'nonfinite'] as const;

export interface BakeRequest extends BakeSettings {
  quality: BakeQuality;
}

/** Export formats the app writes: core's (core/export/export-mesh.ts; a test pins the two lists together). */
export const EXPORT_FORMATS = ['glb', 'gltf', 'ply', 'stl', 'obj'] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

export interface ExportRequest {
  /** Bake settings the export must match; the main process bakes at full depth first if the last full bake differs. */
  settings: BakeSettings;
  format: ExportFormat;
  /** Write vertex colors (COLOR_0) when the field has them. */
  colors: boolean;
  /** glTF/GLB: quantize attributes (KHR_mesh_quantization). */
  quantize: boolean;
  /** glTF/GLB: compress with EXT_meshopt_compression (implies quantize). */
  meshopt: boolean;
  /** Name of the glTF node and mesh. */
  name: string;
  /**
   * Which level of detail to write: 0 = the full mesh, with every lighter copy as further levels
   * when the bake made any; k > 0 = lighter copy k alone.
   */
  lod: number;
  /**
   * glTF/GLB, full mesh (lod 0) only: edge of the base-color and normal textures baked from the
   * field, texels (a power of two from {@link LIMITS}.minTextureSize to .maxTextureSize), with a UV
   * layout and tangents; null or absent = no textures (the CLI's --texture).
   */
  texture?: number | null;
  /** glTF/GLB: add the convex hull of the full mesh as node `<name>_collision` (the CLI's --collision). Absent = false. */
  collision?: boolean;
}

/** The keys an {@link ExportRequest} may leave out (older windows and scripts send none of them). */
export const EXPORT_OPTIONAL_KEYS = ['texture', 'collision'] as const;

// ---------------------------------------------------------------------------------------------
// Replies. Handlers never throw across IPC: they answer with a Reply.

export type Reply<T> = { ok: true; value: T } | { ok: false; error: string; cancelled?: boolean };

/** What the window shows about an opened field. */
export interface FieldInfo {
  /** Absolute path the field came from (already granted; usable with `openRecent`). */
  path: string;
  name: string;
  /** `onnx`, `grid`, `recipe`. */
  source: string;
  kind: 'sdf' | 'density' | 'occupancy';
  bounds: Bounds;
  outputs: string[];
  hasColor: boolean;
  /** The level the file declares, or null. */
  declaredLevel: number | null;
  /** Level the window starts at: the declared one, else a guess from the values. */
  startLevel: number;
  /** Slider range for the level, field units. */
  levelRange: [number, number];
  /** Smallest and largest value seen on a coarse lattice ([NaN, NaN] sent as nulls when none was finite). */
  valueRange: [number | null, number | null];
  /** Percentiles 1, 50, 99 of the coarse values. */
  percentiles: { p1: number | null; p50: number | null; p99: number | null };
  /** Depth the window starts at, and the range it offers. */
  depth: { start: number; min: number; max: number; preview: number };
  methods: string[];
  /** Shaping options the core in this build understands. */
  shaping: { budget: boolean; lods: boolean; minPart: boolean };
  /** Normal methods core offers (empty: core has no choice). */
  normalsMethods: string[];
  /** Formats the export step offers. */
  exportFormats: ExportFormat[];
  /** Extra facts (opset, grid shape, recipe nodes …), already formatted. */
  details: Record<string, string>;
  /** Fields opened earlier in this session, newest first: name and path. */
  recent: { name: string; path: string }[];
}

/** A mesh as typed arrays: 3 floats per vertex, 3 indices per triangle. */
export interface MeshPayload {
  positions: Float32Array;
  normals: Float32Array;
  /** Linear RGB 0..1, 3 floats per vertex. */
  colors?: Float32Array;
  indices: Uint32Array;
}

/** The verdict on a mesh, as the Check step shows it. */
export interface Verdict {
  triangles: number;
  vertices: number;
  watertight: boolean;
  boundaryEdges: number;
  nonManifoldEdges: number;
  components: number;
  genus: number | null;
  /** m² */
  area: number;
  /** m³ */
  volume: number;
  /** Largest distance between the shaped mesh and the surface before shaping, millimetres; null when core reports none. */
  errorMm: number | null;
  /** Seconds per stage, in pipeline order. */
  timings: [string, number][];
  warnings: string[];
}

export interface BakeResult {
  /** The job's id (progress events carry it). */
  jobId: number;
  quality: BakeQuality;
  /** Depth actually sampled (preview: shallower than asked). */
  depth: number;
  level: number;
  mesh: MeshPayload;
  /** Lighter copies, when core made them. */
  lods: MeshPayload[];
  /** Each lighter copy's largest distance from the unreduced mesh, millimetres (same order as `lods`). */
  lodErrorsMm: number[];
  /** Edges to highlight: 2 points (6 floats) per edge. `open`: used by one triangle; `nonManifold`: by three or more. */
  problemEdges: { open: Float32Array; nonManifold: Float32Array };
  verdict: Verdict;
}

export interface ValidatorVerdict {
  errors: number;
  warnings: number;
  infos: number;
  /** The first few messages, `CODE: text`. */
  messages: string[];
  validatorVersion: string;
}

export interface ExportResult {
  path: string;
  /** File size, bytes. */
  bytes: number;
  format: ExportFormat;
  /** gltf-validator's verdict on glTF and GLB files; null for other formats. */
  validator: ValidatorVerdict | null;
  /** The textures written: edge in texels, and the share (0..1) of texels the UV layout covers; null without textures. */
  texture: { size: number; coverage: number } | null;
  /** The collision hull written: its triangle count; null without one. */
  collision: { triangles: number } | null;
}

// ---------------------------------------------------------------------------------------------
// Events.

export interface ProgressEvent {
  jobId: number;
  /** What the job is: opening a field, a preview or full bake, an export. */
  job: 'open' | 'preview' | 'full' | 'export';
  /** Pipeline stage name (`sample`, `extract`, `color`, `check`, `export`, `validate` …). */
  stage: string;
  /** 0..1 within the stage. */
  fraction: number;
}

export const MENU_COMMANDS = ['open', 'export', 'frame'] as const;
export type MenuCommand = (typeof MENU_COMMANDS)[number];
export interface MenuEvent {
  command: MenuCommand;
}

// ---------------------------------------------------------------------------------------------
// Validators: each returns null when the payload is acceptable, else a sentence naming the problem.

export type Validator = (payload: unknown) => string | null;

/** The validator of each request channel. */
export const VALIDATORS: Readonly<Record<Channel, Validator>> = {
  [CHANNELS.openStartup]: validateEmpty,
  [CHANNELS.openDialog]: validateEmpty,
  [CHANNELS.openDropped]: validateOpenPath,
  [CHANNELS.openRecent]: validateOpenPath,
  [CHANNELS.bake]: validateBakeRequest,
  [CHANNELS.cancel]: validateEmpty,
  [CHANNELS.exportMesh]: validateExportRequest,
};

/** An empty object (`{}`). */
export function validateEmpty(p: unknown): string | null {
  return keysProblem(p, []);
}

/** `{ path }`: an absolute path, not too long, no control characters. */
export function validateOpenPath(p: unknown): string | null {
  const k = keysProblem(p, ['path']);
  if (k) return k;
  return pathProblem((p as Record<string, unknown>).path);
}

/** {@link BakeRequest}. */
export function validateBakeRequest(p: unknown): string | null {
  const k = keysProblem(p, ['quality', ...BAKE_SETTING_KEYS]);
  if (k) return k;
  const r = p as Record<string, unknown>;
  if (r.quality !== 'preview' && r.quality !== 'full') return `quality must be 'preview' or 'full'`;
  return settingsProblem(r);
}

/** {@link ExportRequest}. */
export function validateExportRequest(p: unknown): string | null {
  const optional = typeof p === 'object' && p !== null ? EXPORT_OPTIONAL_KEYS.filter((key) => Object.prototype.hasOwnProperty.call(p, key)) : [];
  const k = keysProblem(p, ['settings', 'format', 'colors', 'quantize', 'meshopt', 'name', 'lod', ...optional]);
  if (k) return k;
  const r = p as Record<string, unknown>;
  const sk = keysProblem(r.settings, BAKE_SETTING_KEYS, 'settings');
  if (sk) return sk;
  const s = settingsProblem(r.settings as Record<string, unknown>);
  if (s) return `settings: ${s}`;
  if (!(EXPORT_FORMATS as readonly unknown[]).includes(r.format)) return `format must be one of: ${EXPORT_FORMATS.join(', ')}`;
  if (typeof r.colors !== 'boolean') return 'colors must be true or false';
  if (typeof r.quantize !== 'boolean') return 'quantize must be true or false';
  if (typeof r.meshopt !== 'boolean') return 'meshopt must be true or false';
  const n = textProblem(r.name, 'name', LIMITS.maxNameLength);
  if (n) return n;
  if ((r.name as string).trim() === '') return 'name must not be empty';
  const lod = integerProblem(r.lod, 'lod', 0, LIMITS.maxLods);
  if (lod) return lod;
  if ('texture' in r && r.texture !== null) {
    const t = r.texture;
    if (typeof t !== 'number' || !Number.isInteger(t) || t < LIMITS.minTextureSize || t > LIMITS.maxTextureSize || (t & (t - 1)) !== 0) {
      return `texture must be null or a power of two from ${LIMITS.minTextureSize} to ${LIMITS.maxTextureSize} texels, such as 512 or 1024`;
    }
  }
  if ('collision' in r && typeof r.collision !== 'boolean') return 'collision must be true or false';
  return null;
}

function settingsProblem(r: Record<string, unknown>): string | null {
  if (typeof r.level !== 'number' || !Number.isFinite(r.level)) return 'level must be a finite number';
  if (Math.abs(r.level) > LIMITS.maxAbsLevel) return `level must be within ±${LIMITS.maxAbsLevel}`;
  const d = integerProblem(r.depth, 'depth', LIMITS.minDepth, LIMITS.maxDepth);
  if (d) return d;
  const m = textProblem(r.method, 'method', LIMITS.maxMethodLength);
  if (m) return m;
  if (!/^[a-z][a-z0-9-]*$/.test(r.method as string)) return 'method must be a lower-case name such as marching-cubes';
  const b = integerProblem(r.budget, 'budget', 0, LIMITS.maxBudget);
  if (b) return b;
  const l = integerProblem(r.lods, 'lods', 0, LIMITS.maxLods);
  if (l) return l;
  if (typeof r.minPart !== 'number' || !Number.isFinite(r.minPart) || r.minPart < 0 || r.minPart > 1) return 'minPart must be a number from 0 to 1';
  if (r.normals !== 'field' && r.normals !== 'mesh') return "normals must be 'field' or 'mesh'";
  if (r.bounds !== null) {
    const b = r.bounds;
    if (!Array.isArray(b) || b.length !== 6) return 'bounds must be null or six numbers xmin,ymin,zmin,xmax,ymax,zmax';
    for (let i = 0; i < 6; i++) {
      if (typeof b[i] !== 'number' || !Number.isFinite(b[i]) || Math.abs(b[i]) > LIMITS.maxAbsCoordinate) {
        return `bounds value ${i + 1} must be a finite number within ±${LIMITS.maxAbsCoordinate} m`;
      }
    }
    for (let a = 0; a < 3; a++) if (!(b[a] < b[a + 3])) return `bounds ${'xyz'[a]}min must be below ${'xyz'[a]}max`;
  }
  if (r.lipschitz !== null && (typeof r.lipschitz !== 'number' || !Number.isFinite(r.lipschitz) || r.lipschitz <= 0 || r.lipschitz > LIMITS.maxLipschitz)) {
    return `lipschitz must be null or a number above 0 and at most ${LIMITS.maxLipschitz}`;
  }
  if (r.startDepth !== null) {
    const sd = integerProblem(r.startDepth, 'startDepth', 0, LIMITS.maxDepth);
    if (sd) return sd;
  }
  if (r.nonfinite !== 'error' && r.nonfinite !== 'outside') return "nonfinite must be 'error' or 'outside'";
  return null;
}

/** Plain object with exactly `keys`. */
function keysProblem(p: unknown, keys: readonly string[], what = 'payload'): string | null {
  if (typeof p !== 'object' || p === null || Array.isArray(p)) return `${what} must be an object`;
  const proto = Object.getPrototypeOf(p);
  if (proto !== Object.prototype && proto !== null) return `${what} must be a plain object`;
  const own = Object.keys(p);
  if (Object.getOwnPropertySymbols(p).length > 0) return `${what} must not have symbol keys`;
  for (const key of own) if (!keys.includes(key)) return `${what} has an unexpected key '${key.slice(0, 40)}'`;
  for (const key of keys) if (!Object.prototype.hasOwnProperty.call(p, key)) return `${what} is missing '${key}'`;
  return null;
}

function integerProblem(v: unknown, name: string, lo: number, hi: number): string | null {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < lo || v > hi) return `${name} must be a whole number from ${lo} to ${hi}`;
  return null;
}

function textProblem(v: unknown, name: string, maxLength: number): string | null {
  if (typeof v !== 'string') return `${name} must be text`;
  if (v.length > maxLength) return `${name} is longer than ${maxLength} characters`;
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f]/.test(v)) return `${name} must not contain control characters`;
  return null;
}

function pathProblem(v: unknown): string | null {
  const t = textProblem(v, 'path', LIMITS.maxPathLength);
  if (t) return t;
  const s = v as string;
  const absolute = s.startsWith('/') || /^[A-Za-z]:[\\/]/.test(s) || s.startsWith('\\\\');
  if (!absolute) return 'path must be absolute';
  return null;
}
