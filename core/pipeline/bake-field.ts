/**
 * The whole job for one field: sample → extract → cleanup → normals from the field → decimation to
 * the budget → LODs → color baking (after decimation, so every final vertex gets the field's color
 * at its own position) → checks → texture maps and a collision hull (glTF, on request) → export
 * (GLB, glTF, PLY, STL or OBJ), with a report.
 * Front ends (CLI, desktop app) call this; it touches no files. `timings` use `performance.now()`,
 * which Node, workers and browsers all have.
 */
import type { Field } from '../fields/field.js';
import type { Bounds, Logger, MeshData, ProgressFn } from '../types.js';
import { CancelledError, FieldkilnError, throwIfAborted } from '../types.js';
import { sampleOctree, SAMPLE_OCTREE_DEFAULTS, type SurfaceCells } from '../sampling/sample-octree.js';
import { marchingCubes } from '../meshing/marching-cubes.js';
import { marchingCubesGrid, type GridExtraction, type MarchingCubesGridOptions } from '../meshing/marching-cubes-grid.js';
import { dualContour } from '../meshing/dual-contouring.js';
import { areaWeightedNormals } from '../normals/area-weighted-normals.js';
import { analyzeMesh, type MeshReport } from '../checks/analyze-mesh.js';
import { checkMesh, type MeshChecks } from '../checks/check-mesh.js';
import type { CheckResult } from '../checks/check-result.js';
import { countSmallParts, removeSmallParts, SMALL_PART_WARNING_FRACTION } from '../cleanup/remove-small-parts.js';
import { removeDegenerateTriangles, type DegenerateTrianglesRemoved } from '../cleanup/remove-degenerate-triangles.js';
import { fieldGradientNormals, FIELD_GRADIENT_NORMALS_DEFAULTS } from '../normals/field-gradient-normals.js';
import { decimateMesh, type DecimateResult } from '../decimate/decimate-mesh.js';
import { buildLods } from '../decimate/build-lods.js';
import { TriangleGrid } from '../decimate/triangle-grid.js';
import { bakeVertexColors } from '../color/bake-vertex-colors.js';
import { exportMesh, isGltfFormat, EXPORT_FORMATS, type ExportFormat } from '../export/export-mesh.js';
import { WRITE_GLB_DEFAULTS } from '../export/write-glb.js';
import { FIELDKILN_VERSION } from '../version.js';
import { bakeTextures, TEXTURE_DEFAULTS, type BakeTexturesResult, type TextureReport } from '../texture/bake-textures.js';
import type { UvAtlasModule } from '../texture/unwrap-mesh.js';
import type { DeflateFn } from '../texture/encode-png.js';
import { convexHull } from '../collision/convex-hull.js';

export type MeshingMethod = 'marching-cubes' | 'dual-contouring';
export const MESHING_METHODS: readonly MeshingMethod[] = ['marching-cubes', 'dual-contouring'];

/** Options for {@link bakeField}. */
export interface BakeOptions {
  /** Finest octree level. Default: {@link SAMPLE_OCTREE_DEFAULTS}.depth. */
  depth?: number;
  /** Iso-level, field units. Default: the field's own. */
  level?: number;
  /** Sampling bounds, metres. Default: the field's. */
  bounds?: Bounds;
  /** Lipschitz bound for SDF pruning. Default: the field's promise, else 1.5. */
  lipschitz?: number;
  /** Start level for density/occupancy refinement. Default: 5. */
  startDepth?: number;
  /** NaN/±Inf handling. Default: 'error'. */
  nonfinite?: 'error' | 'outside';
  /** Meshing method. Default: 'marching-cubes'. */
  method?: MeshingMethod;
  /**
   * Mesh a dense grid at its own samples (marching cubes straight over them, skipping empty blocks)
   * instead of resampling it onto the octree lattice; `depth`, `bounds`, `lipschitz` and `startDepth`
   * do not apply. Only for fields with `samples` (grids). Default: false.
   */
  onSamples?: boolean;
  /**
   * With `onSamples`: the dense-grid extractor, for a platform that can run it on several threads
   * (the CLI passes app/node/marching-cubes-grid-parallel.ts); it must return what
   * {@link marchingCubesGrid} returns. Default: `marchingCubesGrid`, on the calling thread.
   */
  gridExtractor?: (values: Float32Array, dims: [number, number, number], options: MarchingCubesGridOptions) => GridExtraction | Promise<GridExtraction>;
  /**
   * Runs the check stage's scans ({@link checkMesh}) on the base level, for a platform that can run them
   * on another thread while the field is still evaluated for normals and colors (the CLI passes
   * app/node/check-mesh-off-thread.ts). Called as soon as the base level's triangles are final (after
   * cleanup, or after decimation when there is a budget) with its positions and indices, which it must
   * copy and not change; awaited at the check stage; its `signal` aborts when the bake ends early.
   * Default: the scans run at the check stage, on the calling thread, as one synchronous call: an abort
   * takes effect when they end (about 2 s for the depth-10 demo mesh on the 2-core machine).
   */
  meshChecker?: (mesh: MeshData, signal: AbortSignal) => Promise<MeshChecks>;
  /** Written into the GLB's extras. */
  provenance?: Record<string, unknown>;
  /** Skip writing the GLB (preview). Default: false. */
  skipExport?: boolean;
  /** Drop connected parts whose area is below this fraction (0..1) of the largest part's. Default: 0 (keep all, warn about small ones). */
  minPart?: number;
  /** Decimate to at most this many triangles (meshoptimizer, checked). Default: 0 (no budget). */
  budget?: number;
  /** Further levels of detail, each about half the triangles of the one before. Default: 0. */
  lods?: number;
  /** Vertex normals from the field's gradient, or area-weighted from the mesh. Default: 'field'. */
  normals?: NormalsMethod;
  /** Output format. Default: 'glb'. */
  format?: ExportFormat;
  /** glTF: quantize attributes (KHR_mesh_quantization). Default: false. */
  quantize?: boolean;
  /** glTF: EXT_meshopt_compression (implies quantize). Default: false. */
  meshopt?: boolean;
  /**
   * glTF: base color and normal textures of this edge (texels, a power of two from 64 to 4096)
   * baked from the field onto the base level (`core/texture/bake-textures.ts`). Default: 0 (none).
   */
  texture?: number;
  /** The xatlas module for the UV layout (watlas after `Initialize()`); required with `texture`. */
  unwrapper?: UvAtlasModule;
  /** zlib compressor for the texture PNGs (e.g. Node's `zlib.deflateSync`). Default: stored, uncompressed. */
  deflate?: DeflateFn;
  /** glTF: a convex hull of the base level as node `<name>_collision` in scene `collision`. Default: false. */
  collision?: boolean;
  signal?: AbortSignal;
  onProgress?: ProgressFn;
  logger?: Logger;
}

export type NormalsMethod = 'field' | 'mesh';
export const NORMALS_METHODS: readonly NormalsMethod[] = ['field', 'mesh'];

export const BAKE_DEFAULTS = {
  depth: SAMPLE_OCTREE_DEFAULTS.depth,
  /** 0: keep every part (small ones are mentioned in a warning). */
  minPart: 0,
  /** 0: no budget. */
  budget: 0,
  lods: 0,
  normals: 'field' as NormalsMethod,
  format: 'glb' as ExportFormat,
  quantize: false,
  meshopt: false,
  method: 'marching-cubes' as MeshingMethod,
  /** 0: no textures. */
  texture: 0,
  collision: false,
};

/** The report of one bake; the CLI adds `output`. */
export interface BakeReport {
  fieldkiln: string;
  input: { source: string; name: string; kind: string; bounds: Bounds; level: number; outputs: string[]; hasColor: boolean };
  sampling: {
    /** 'octree': adaptive sampling on the lattice of `depth`; 'samples': a grid meshed at its own samples (`depth` 0). */
    mode: 'octree' | 'samples';
    depth: number;
    cellSize: number;
    latticeCells: [number, number, number];
    evaluations: number;
    denseEvaluations: number;
    evaluationRatio: number;
    surfaceCells: number;
    closedAtBounds: number;
    nonFinite: number;
    valueRange: [number, number];
    /** Evaluations beyond the sampler's: dual contouring's root finding and gradients. */
    extraEvaluations: number;
    /** SDF fields: the gradient bound used to skip empty space, and the steepest |Δs|/h measured at the surface (see SurfaceCells). */
    lipschitz?: number;
    steepestEdgeSlope?: number;
    /** With `onSamples`: threads the grid extractor used (1 on the calling thread). */
    extractionThreads?: number;
  };
  mesh: Omit<MeshReport, 'where' | 'perComponent'> & {
    method: MeshingMethod;
    /** Pairs of triangles of the final mesh that intersect (not counting shared vertices and edges). */
    selfIntersections: number;
    perComponent: MeshReport['perComponent'];
    where: MeshReport['where'];
  };
  /** What cleanup removed (before decimation). */
  cleanup: {
    minPart: number;
    smallParts: { parts: number; triangles: number; area: number };
    degenerateTriangles: DegenerateTrianglesRemoved;
  };
  /**
   * `evaluations`: points the field evaluated for normals (6 per vertex that got the field's normal). With
   * a budget, only the base level's vertices get the field's normal; decimation is guided by `guide`'s
   * normals: 'lattice' (from the sampled values, no evaluation), or 'field'/'mesh' (the final ones).
   */
  normals: { method: NormalsMethod; fallbackVertices: number; step: number | null; evaluations: number; guide: 'lattice' | NormalsMethod };
  /** `targetTriangles` is null without a budget; `maxError` is the measured distance from the undecimated mesh, metres. */
  decimation: { targetTriangles: number | null; inputTriangles: number; triangles: number; maxError: number; attempts: number };
  /** Further levels; `maxError` is each level's distance from the undecimated mesh, metres. */
  lods: { level: number; targetTriangles: number; triangles: number; vertices: number; maxError: number; watertight: boolean; genus: number | null }[];
  /** Vertex colors baked after decimation; `averagedVertices` got a neighbourhood average. */
  colors: { baked: boolean; averagedVertices: number };
  /** Every named check (core/checks) on the base level. */
  checks: Pick<CheckResult, 'name' | 'ok' | 'count' | 'unit' | 'where'>[];
  /** Texture maps of the base level (size, charts, coverage, stretch, bakeSeconds, …); null without `texture`. */
  texture: TextureReport | null;
  /** The collision hull: its node's name and size; null without `collision`. */
  collision: { node: string; triangles: number; vertices: number } | null;
  /**
   * Seconds per stage, and `total`. With a `meshChecker`, `check` is what the check stage added to the
   * bake (waiting for the scans) and `checkOffThread` the seconds the scans ran on their own thread.
   */
  timings: Record<string, number>;
  output?: { path: string; bytes: number; format: string };
  warnings: string[];
}

export interface BakeResult {
  mesh: MeshData;
  report: BakeReport;
  /** GLB bytes, unless `skipExport` or another format. */
  glb?: Uint8Array;
  /** The exported file's bytes in `format`, unless `skipExport`. */
  bytes?: Uint8Array;
  format: ExportFormat;
  /** Further levels of detail (normals, and colors when the field has them). */
  lods: MeshData[];
  /** The sampler's surface cells (absent with `onSamples`). */
  cells?: SurfaceCells;
  /** With `texture`: the base level split at UV seams, its UVs, tangents and images (what the glTF holds). */
  textures?: BakeTexturesResult;
  /** With `collision`: the convex hull of the base level. */
  collision?: MeshData;
}

/**
 * Turns `field` into a checked, exported mesh.
 *
 * @example
 * const { glb, report } = await bakeField(field, { depth: 8 });
 */
export async function bakeField(field: Field, options: BakeOptions = {}): Promise<BakeResult> {
  // Any failure that is not the user's input (a worker that crashed, a runtime that threw) ends the job
  // with an error that names the stage it happened in.
  let stage = 'sample';
  const onProgress = options.onProgress;
  // Stops a `meshChecker` still running when the bake ends early (an error or the user's abort).
  const checkStop = new AbortController();
  const onAbort = () => checkStop.abort();
  options.signal?.addEventListener('abort', onAbort, { once: true });
  try {
    return await bakeStages(
      field,
      {
        ...options,
        onProgress: (name, fraction) => {
          if (name !== 'done') stage = name;
          onProgress?.(name, fraction);
        },
      },
      checkStop.signal,
    );
  } catch (e) {
    if (e instanceof FieldkilnError || e instanceof CancelledError) throw e;
    throw new FieldkilnError(`the ${stage} stage failed: ${(e as Error)?.message ?? String(e)}`);
  } finally {
    checkStop.abort();
    options.signal?.removeEventListener('abort', onAbort);
  }
}

async function bakeStages(field: Field, options: BakeOptions, checkStop: AbortSignal): Promise<BakeResult> {
  const t0 = performance.now();
  const timings: Record<string, number> = {};
  const warnings: string[] = [];
  const warn = (m: string) => {
    warnings.push(m);
    options.logger?.warn(m);
  };
  const progress = options.onProgress ?? (() => {});
  const method = options.method ?? BAKE_DEFAULTS.method;
  if (!MESHING_METHODS.includes(method)) throw new FieldkilnError(`unknown method '${method}'; use one of: ${MESHING_METHODS.join(', ')}`);
  const depth = options.depth ?? BAKE_DEFAULTS.depth;
  const shaping = shapingOptions(options);
  const bounds = options.bounds ?? field.bounds;
  const level = options.level ?? field.defaultLevel;
  if (level === undefined) throw new FieldkilnError(`this ${field.kind} field declares no iso-level; pass --level`);

  let t = performance.now();
  // What the report says about sampling, whichever way the surface was found.
  let sampled: Omit<BakeReport['sampling'], 'extraEvaluations' | 'mode' | 'depth'>;
  let cells: SurfaceCells | undefined;
  let mesh: MeshData | undefined;
  // A costly field baked to a budget: marching cubes' lattice normals guide decimation (see the normals below).
  const latticeGuideWanted = shaping.normals === 'field' && shaping.budget > 0 && field.costly === true;
  let extraEvaluations = 0;
  if (options.onSamples) {
    const g = field.samples;
    if (!g) throw new FieldkilnError(`--on-samples meshes a dense grid at its own samples; ${field.description.name} is a ${field.description.source} field, which has none`);
    if (method !== 'marching-cubes') throw new FieldkilnError(`--on-samples works with marching cubes only (dual contouring needs the field between the samples)`);
    if (options.bounds) throw new FieldkilnError(`--bounds does not apply with --on-samples: the grid is meshed over its own bounds`);
    const [gx, gy, gz] = g.dims;
    const inside = (v: number) => (field.kind === 'sdf' ? v < level : v > level);
    let vmin = Infinity, vmax = -Infinity, nonFinite = 0, closedAtBounds = 0;
    for (let k = 0, q = 0; k < gz; k++)
      for (let j = 0; j < gy; j++)
        for (let i = 0; i < gx; i++, q++) {
          const v = g.values[q];
          if (!Number.isFinite(v)) {
            nonFinite++;
            continue;
          }
          if (v < vmin) vmin = v;
          if (v > vmax) vmax = v;
          if ((i === 0 || j === 0 || k === 0 || i === gx - 1 || j === gy - 1 || k === gz - 1) && inside(v)) closedAtBounds++;
        }
    if (nonFinite > 0 && (options.nonfinite ?? 'error') === 'error') {
      throw new FieldkilnError(`the grid holds ${nonFinite} non-finite samples (NaN or ±Inf); pass --nonfinite outside to treat them as empty space`);
    }
    timings.sample = secs(t);
    progress('extract', 0);
    t = performance.now();
    const ex = await (options.gridExtractor ?? marchingCubesGrid)(g.values, g.dims, { kind: field.kind, level, origin: g.origin, spacing: g.spacing });
    timings.extract = secs(t);
    mesh = ex.mesh;
    sampled = {
      cellSize: Math.min(...g.spacing),
      latticeCells: [gx - 1, gy - 1, gz - 1],
      evaluations: 0,
      denseEvaluations: gx * gy * gz,
      evaluationRatio: 0,
      surfaceCells: ex.surfaceCells,
      closedAtBounds,
      nonFinite,
      valueRange: [vmin, vmax],
      extractionThreads: (ex as GridExtraction & { workers?: number }).workers ?? 1,
    };
  } else {
    cells = await sampleOctree(field, {
      depth,
      level,
      bounds,
      lipschitz: options.lipschitz,
      startDepth: options.startDepth,
      nonfinite: options.nonfinite,
      signal: options.signal,
      onProgress: progress,
    });
    timings.sample = secs(t);
    const steep = cells.steepestEdgeSlope ?? 0;
    // 1% leeway: an exact distance field measures a hair over its bound from float32 rounding of sample
    // positions and values (1.00001 on the demo recipes; at depth 12 over 1 m a float32 step is ~0.05% of a cell).
    if (cells.lipschitz !== undefined && steep > cells.lipschitz * 1.01) {
      warn(
        `the field changes faster than the gradient bound used to skip empty space (${fmt(steep)} against ${fmt(cells.lipschitz)}, ` +
          `measured along lattice edges at the surface), so a separate piece of surface away from the rest may have been missed; ` +
          `pass --lipschitz ${fmt(Math.ceil(steep * 1.25 * 10) / 10)} to be safe`,
      );
    }
    sampled = {
      cellSize: cells.lattice.cellSize,
      latticeCells: cells.lattice.cells,
      evaluations: cells.evaluations,
      denseEvaluations: cells.denseEvaluations,
      evaluationRatio: cells.evaluations / cells.denseEvaluations,
      surfaceCells: cells.count,
      closedAtBounds: cells.closedAtBounds,
      nonFinite: cells.nonFinite,
      valueRange: cells.valueRange,
      ...(cells.lipschitz !== undefined ? { lipschitz: cells.lipschitz, steepestEdgeSlope: cells.steepestEdgeSlope } : {}),
    };
  }
  const [vmin, vmax] = sampled.valueRange;
  if (sampled.surfaceCells === 0) {
    const range = Number.isFinite(vmin) ? ` (values seen: ${fmt(vmin)} to ${fmt(vmax)})` : '';
    const where = options.onSamples ? 'at its own samples' : `at depth ${depth}`;
    // An SDF steeper than the bound can have its whole surface pruned away: say so.
    const hint = cells?.lipschitz !== undefined ? `; if the field is steeper than the gradient bound used to skip empty space (${fmt(cells.lipschitz)}), pass a larger --lipschitz` : '';
    throw new FieldkilnError(`no surface: the field does not cross level ${fmt(level)} inside the bounds ${where}${range}${hint}`);
  }
  if (sampled.closedAtBounds > 0) {
    warn(`the surface leaves the bounds (${sampled.closedAtBounds} samples on the outer layer are inside); it was closed at the bounds, treating outside the bounds as outside`);
  }
  if (sampled.nonFinite > 0) warn(`${sampled.nonFinite} samples were NaN or ±Inf and were treated as outside (--nonfinite outside)`);

  throwIfAborted(options.signal);
  if (cells) {
    progress('extract', 0);
    t = performance.now();
    if (method === 'dual-contouring') {
      const dc = await dualContour(cells, field, { signal: options.signal });
      mesh = dc.mesh;
      extraEvaluations = dc.extraEvaluations;
    } else mesh = marchingCubes(cells, { normals: latticeGuideWanted });
    timings.extract = secs(t);
  }

  if (!mesh) throw new Error('bakeField: no mesh after extraction');
  // Cleanup: floaters (on request), then degenerate triangles, which are removed without opening the mesh.
  progress('cleanup', 0);
  t = performance.now();
  let full: MeshData = mesh;
  const cleanup: BakeReport['cleanup'] = {
    minPart: shaping.minPart,
    smallParts: { parts: 0, triangles: 0, area: 0 },
    degenerateTriangles: { found: 0, collapsed: 0, flipped: 0, dropped: 0, remaining: 0 },
  };
  if (shaping.minPart > 0) {
    const r = removeSmallParts(full, shaping.minPart);
    full = r.mesh;
    cleanup.smallParts = { parts: r.removed.parts, triangles: r.removed.triangles, area: r.removed.area };
  } else {
    const small = countSmallParts(full, SMALL_PART_WARNING_FRACTION);
    if (small.parts > 0) {
      warn(
        `${small.parts} small part(s) under ${SMALL_PART_WARNING_FRACTION * 100}% of the largest part's area (${fmt(small.area)} m² in all) were kept; ` +
          `--min-part ${SMALL_PART_WARNING_FRACTION} removes them`,
      );
    }
  }
  const degenerate = removeDegenerateTriangles(full);
  full = degenerate.mesh;
  cleanup.degenerateTriangles = degenerate.removed;
  if (degenerate.removed.remaining > 0) {
    warn(`${degenerate.removed.remaining} degenerate triangle(s) could not be removed without opening the mesh and were kept`);
  }
  timings.cleanup = secs(t);

  // The check stage's scans, started on the base level as soon as its triangles are final when the
  // front end runs them elsewhere (they then overlap the field's evaluations for normals and colors).
  let pendingChecks: Promise<MeshChecks> | undefined;
  const startChecks = (m: MeshData) => {
    if (!options.meshChecker) return;
    pendingChecks = options.meshChecker({ positions: m.positions, indices: m.indices }, checkStop);
    pendingChecks.catch(() => {}); // awaited at the check stage; not an unhandled rejection before that
  };
  if (!(shaping.budget > 0)) startChecks(full);

  // Normals. Decimation keeps a subset of the vertices, each with its normal, and is guided by them
  // (decimate-mesh.ts). For a costly field (a network) with a budget and marching cubes, the lattice's
  // own normals (from extraction, no evaluation) guide it and only the base level's vertices are then
  // sent to the field: at depth 9 with a 50 k budget, 6 points for each of 25 k vertices instead of
  // 549 k (sphere_sdf.onnx). Otherwise every vertex of the full mesh gets the field's normal here:
  // recipes' creases are blurred by the lattice's normals (with them as the guide, the largest distance
  // from the full mesh grew 1.16×, geometric mean of 13 recipe and grid cases, 0.55–2.14×), and their
  // evaluations are cheap. On 12 network cases: 1.06× (0.82–1.94×; see DEVELOPERS.md).
  throwIfAborted(options.signal);
  progress('normals', 0);
  t = performance.now();
  const cellSize = sampled.cellSize;
  const step = FIELD_GRADIENT_NORMALS_DEFAULTS.stepCells * cellSize;
  const latticeGuide = latticeGuideWanted && !!full.normals; // none from dual contouring or --on-samples
  const normalsReport: BakeReport['normals'] = { method: shaping.normals, fallbackVertices: 0, step: null, evaluations: 0, guide: latticeGuide ? 'lattice' : shaping.normals };
  const fieldNormals = async (m: MeshData): Promise<Float32Array> => {
    const r = await fieldGradientNormals(field, m.positions, m.indices, { step, signal: options.signal });
    Object.assign(normalsReport, { fallbackVertices: r.fallbackVertices, step, evaluations: r.evaluations });
    if (r.fallbackVertices > 0.01 * (m.positions.length / 3)) {
      warn(`${r.fallbackVertices} vertices took the mesh normal: the field's gradient there was zero, not finite, or pointed into the mesh`);
    }
    return r.normals;
  };
  // With the lattice's guide, the field's normals come after decimation, at the base level's vertices.
  if (!latticeGuide) full.normals = shaping.normals === 'field' ? await fieldNormals(full) : areaWeightedNormals(full.positions, full.indices);
  timings.normals = secs(t);

  // Decimation to the budget and LODs; the field's colors guide the simplifier when it has them.
  const colored = field.hasColor && !!field.evaluateColor;
  const inputTriangles = full.indices.length / 3;
  let base: MeshData = full;
  let lodResults: DecimateResult[] = [];
  const decimation: BakeReport['decimation'] = { targetTriangles: null, inputTriangles, triangles: inputTriangles, maxError: 0, attempts: 0 };
  if (shaping.budget > 0 || shaping.lods > 0) {
    throwIfAborted(options.signal);
    progress('decimate', 0);
    t = performance.now();
    if (colored) full.colors = clamp01(await field.evaluateColor!(full.positions, options.signal));
    const inputReport = analyzeMesh(full);
    // Every level is measured against the full mesh: one distance grid over it serves them all.
    const inputGrid = new TriangleGrid(full);
    let normalsSeconds = 0;
    if (shaping.budget > 0) {
      const d = await decimateMesh(full, { targetTriangles: shaping.budget, inputReport, inputGrid });
      base = d.mesh;
      Object.assign(decimation, { targetTriangles: shaping.budget, triangles: d.triangles, maxError: d.maxError, attempts: d.attempts.length });
      d.warnings.forEach(warn);
      if (latticeGuide) {
        // The base level's vertices get the field's normals; the LODs below keep subsets of them.
        const tn = performance.now();
        base = { ...base, normals: await fieldNormals(base) };
        normalsSeconds = secs(tn);
        timings.normals += normalsSeconds;
      }
    }
    if (shaping.lods > 0) {
      progress('decimate', 0.5);
      lodResults = await buildLods(full, base, shaping.lods, { inputReport, inputGrid });
      lodResults.forEach((l) => l.warnings.forEach(warn));
      if (lodResults.length === 0) warn(`no LODs were made: the base level is too small to halve`);
    }
    timings.decimate = secs(t) - normalsSeconds;
    if (shaping.budget > 0) startChecks(base);
  }
  const lodMeshes = lodResults.map((l) => ({ ...l.mesh }));

  // Colors, baked onto the final vertices of every level.
  let averagedVertices = 0;
  if (colored) {
    throwIfAborted(options.signal);
    progress('bake', 0);
    t = performance.now();
    base = { ...base };
    for (const m of [base, ...lodMeshes]) {
      const r = await bakeVertexColors(field, m, { cellSize, signal: options.signal });
      m.colors = r.colors;
      if (m === base) averagedVertices = r.averagedVertices;
    }
    timings.bake = secs(t);
    timings.color = timings.bake;
  }

  progress('check', 0);
  t = performance.now();
  let checked: MeshChecks;
  if (pendingChecks) {
    try {
      checked = await pendingChecks;
    } catch (e) {
      throwIfAborted(options.signal);
      throw e;
    }
    timings.checkOffThread = checked.seconds;
  } else checked = checkMesh(base);
  const { report: check, selfIntersections, checks } = checked;
  if (selfIntersections > 0) warn(`the mesh intersects itself in ${selfIntersections} pairs of triangles`);
  const lodReport: BakeReport['lods'] = lodResults.map((l, i) => {
    const r = analyzeMesh(l.mesh);
    return { level: i + 1, targetTriangles: l.targetTriangles, triangles: r.triangles, vertices: r.vertices, maxError: l.maxError, watertight: r.watertight, genus: r.genus };
  });
  timings.check = secs(t);
  if (!check.watertight) {
    warn(
      `the mesh is not watertight: ${check.boundaryEdges} boundary edges, ${check.nonManifoldEdges} non-manifold edges, ` +
        `${check.nonManifoldVertices} non-manifold vertices, ${check.inconsistentEdges} inconsistently wound edges`,
    );
  }
  lodReport.forEach((l) => {
    if (!l.watertight) warn(`LOD ${l.level} is not watertight`);
  });

  // Texture maps and the collision hull, for glTF, on the checked base level.
  const gltfOutput = isGltfFormat(shaping.format);
  let textures: BakeTexturesResult | undefined;
  if (shaping.texture > 0 && !gltfOutput) warn(`--texture applies to glTF and GLB only; the ${shaping.format.toUpperCase()} file is written without textures`);
  else if (shaping.texture > 0) {
    if (!options.unwrapper) throw new Error('bakeField: texture needs options.unwrapper (watlas after Initialize())');
    throwIfAborted(options.signal);
    progress('texture', 0);
    t = performance.now();
    textures = await bakeTextures(field, base, {
      size: shaping.texture,
      unwrapper: options.unwrapper,
      level,
      cellSize,
      // The field's surface lies within the decimation's measured error of the base level, plus the sampling's own.
      searchDistance: 2 * decimation.maxError + 2 * cellSize,
      deflate: options.deflate,
      signal: options.signal,
      onProgress: (f) => progress('texture', f),
    });
    timings.texture = secs(t);
    const tr = textures.report;
    if (tr.unprojectedTexels > 0.01 * tr.bakedTexels) {
      warn(`${tr.unprojectedTexels} of ${tr.bakedTexels} texels found no surface along the normal and were baked at the low-poly surface`);
    }
  }
  let hull: MeshData | undefined;
  if (shaping.collision && !gltfOutput) warn(`--collision applies to glTF and GLB only; the ${shaping.format.toUpperCase()} file is written without it`);
  else if (shaping.collision) {
    progress('collision', 0);
    t = performance.now();
    const h = convexHull(base.positions);
    if (h) hull = h.mesh;
    else warn('no collision hull: the mesh is flat (its vertices span no volume)');
    timings.collision = secs(t);
  }

  let glb: Uint8Array | undefined;
  let bytes: Uint8Array | undefined;
  if (!options.skipExport) {
    throwIfAborted(options.signal);
    progress('export', 0);
    t = performance.now();
    const gltf = isGltfFormat(shaping.format);
    if (!gltf && lodMeshes.length > 0) warn(`LODs are written only to glTF and GLB files; the ${shaping.format.toUpperCase()} file holds the base level`);
    if (!gltf && (shaping.quantize || shaping.meshopt)) warn(`--quantize and --meshopt apply to glTF and GLB only; the ${shaping.format.toUpperCase()} file is written without them`);
    bytes = await exportMesh(shaping.format, textures?.mesh ?? base, {
      lods: gltf ? lodMeshes : undefined,
      quantize: shaping.quantize,
      meshopt: shaping.meshopt,
      textures: textures && { uvs: textures.uvs, tangents: textures.tangents, baseColorPng: textures.baseColorPng, normalPng: textures.normalPng },
      collision: hull,
      extras: {
        source: { kind: field.kind, name: field.description.name, ...(options.provenance ?? {}) },
        options: {
          depth,
          level,
          bounds,
          method,
          minPart: shaping.minPart,
          budget: shaping.budget,
          lods: shaping.lods,
          normals: shaping.normals,
          quantize: shaping.quantize,
          meshopt: shaping.meshopt,
          texture: shaping.texture,
          collision: shaping.collision,
        },
      },
    });
    if (shaping.format === 'glb') glb = bytes;
    timings.export = secs(t);
  }
  timings.total = secs(t0);
  progress('done', 1);

  const { where, perComponent, ...meshFigures } = check;
  const report: BakeReport = {
    fieldkiln: FIELDKILN_VERSION,
    input: {
      source: field.description.source,
      name: field.description.name,
      kind: field.kind,
      bounds,
      level,
      outputs: field.description.outputs,
      hasColor: field.hasColor,
    },
    sampling: {
      mode: options.onSamples ? 'samples' : 'octree',
      depth: options.onSamples ? 0 : depth,
      ...sampled,
      extraEvaluations,
    },
    mesh: { method, ...meshFigures, selfIntersections, perComponent, where },
    cleanup,
    normals: normalsReport,
    decimation,
    lods: lodReport,
    colors: { baked: colored, averagedVertices },
    checks,
    texture: textures ? textures.report : null,
    collision: hull ? { node: `${WRITE_GLB_NAME}_collision`, triangles: hull.indices.length / 3, vertices: hull.positions.length / 3 } : null,
    timings,
    warnings,
  };
  return { mesh: base, report, glb, bytes, format: shaping.format, lods: lodMeshes, cells, textures, collision: hull };
}

/** The shaping options with defaults, checked (misuse throws; the CLI checks user input first). */
function shapingOptions(o: BakeOptions) {
  const minPart = o.minPart ?? BAKE_DEFAULTS.minPart;
  const budget = o.budget ?? BAKE_DEFAULTS.budget;
  const lods = o.lods ?? BAKE_DEFAULTS.lods;
  const normals = o.normals ?? BAKE_DEFAULTS.normals;
  const format = o.format ?? BAKE_DEFAULTS.format;
  if (!(minPart >= 0 && minPart <= 1)) throw new FieldkilnError(`minPart must be a fraction from 0 to 1 (got ${minPart})`);
  if (!Number.isInteger(budget) || budget < 0 || (budget > 0 && budget < 4)) throw new FieldkilnError(`budget must be 0 (none) or a whole number of triangles ≥ 4 (got ${budget})`);
  if (!Number.isInteger(lods) || lods < 0 || lods > 16) throw new FieldkilnError(`lods must be a whole number from 0 to 16 (got ${lods})`);
  if (!NORMALS_METHODS.includes(normals)) throw new FieldkilnError(`unknown normals method '${normals}'; use one of: ${NORMALS_METHODS.join(', ')}`);
  if (!EXPORT_FORMATS.includes(format)) throw new FieldkilnError(`unknown output format '${format}'; use one of: ${EXPORT_FORMATS.join(', ')}`);
  const texture = o.texture ?? BAKE_DEFAULTS.texture;
  const { minSize, maxSize } = TEXTURE_DEFAULTS;
  if (!Number.isInteger(texture) || (texture !== 0 && (texture < minSize || texture > maxSize || (texture & (texture - 1)) !== 0))) {
    throw new FieldkilnError(`texture must be 0 (none) or a power of two from ${minSize} to ${maxSize} texels (got ${texture})`);
  }
  const collision = o.collision ?? BAKE_DEFAULTS.collision;
  return { minPart, budget, lods, normals, format, quantize: o.quantize ?? BAKE_DEFAULTS.quantize, meshopt: o.meshopt ?? BAKE_DEFAULTS.meshopt, texture, collision };
}

function clamp01(a: Float32Array): Float32Array {
  for (let i = 0; i < a.length; i++) a[i] = Number.isFinite(a[i]) ? Math.min(1, Math.max(0, a[i])) : 0;
  return a;
}

/** The base node's name in glTF output (the pipeline does not rename it). */
const WRITE_GLB_NAME = WRITE_GLB_DEFAULTS.name;

function secs(since: number): number {
  return Math.round(performance.now() - since) / 1000;
}

function fmt(v: number): string {
  return Number(v.toPrecision(6)).toString();
}
