/**
 * The whole job for one field: sample → extract → normals → color → check → GLB, with a report.
 * Front ends (CLI, desktop app) call this; it touches no files. `timings` use `performance.now()`,
 * which Node, workers and browsers all have.
 */
import type { Field } from '../fields/field.js';
import type { Bounds, Logger, MeshData, ProgressFn } from '../types.js';
import { FieldkilnError, throwIfAborted } from '../types.js';
import { sampleOctree, SAMPLE_OCTREE_DEFAULTS, type SurfaceCells } from '../sampling/sample-octree.js';
import { marchingCubes } from '../meshing/marching-cubes.js';
import { areaWeightedNormals } from '../normals/area-weighted-normals.js';
import { analyzeMesh, type MeshReport } from '../checks/analyze-mesh.js';
import { writeGlb } from '../export/write-glb.js';
import { FIELDKILN_VERSION } from '../version.js';

export type MeshingMethod = 'marching-cubes';
export const MESHING_METHODS: readonly MeshingMethod[] = ['marching-cubes'];

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
  /** Written into the GLB's extras. */
  provenance?: Record<string, unknown>;
  /** Skip writing the GLB (preview). Default: false. */
  skipExport?: boolean;
  signal?: AbortSignal;
  onProgress?: ProgressFn;
  logger?: Logger;
}

export const BAKE_DEFAULTS = {
  depth: SAMPLE_OCTREE_DEFAULTS.depth,
  method: 'marching-cubes' as MeshingMethod,
};

/** The report of one bake; the CLI adds `output`. */
export interface BakeReport {
  fieldkiln: string;
  input: { source: string; name: string; kind: string; bounds: Bounds; level: number; outputs: string[]; hasColor: boolean };
  sampling: {
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
  };
  mesh: Omit<MeshReport, 'where' | 'perComponent'> & { method: MeshingMethod; perComponent: MeshReport['perComponent']; where: MeshReport['where'] };
  timings: Record<string, number>;
  output?: { path: string; bytes: number; format: string };
  warnings: string[];
}

export interface BakeResult {
  mesh: MeshData;
  report: BakeReport;
  /** GLB bytes, unless `skipExport`. */
  glb?: Uint8Array;
  cells: SurfaceCells;
}

/**
 * Turns `field` into a checked, exported mesh.
 *
 * @example
 * const { glb, report } = await bakeField(field, { depth: 8 });
 */
export async function bakeField(field: Field, options: BakeOptions = {}): Promise<BakeResult> {
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
  const bounds = options.bounds ?? field.bounds;
  const level = options.level ?? field.defaultLevel;
  if (level === undefined) throw new FieldkilnError(`this ${field.kind} field declares no iso-level; pass --level`);

  let t = performance.now();
  const cells = await sampleOctree(field, {
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
  const [vmin, vmax] = cells.valueRange;
  if (cells.count === 0) {
    const range = Number.isFinite(vmin) ? ` (values seen: ${fmt(vmin)} to ${fmt(vmax)})` : '';
    throw new FieldkilnError(`no surface: the field does not cross level ${fmt(level)} inside the bounds at depth ${depth}${range}`);
  }
  if (cells.closedAtBounds > 0) {
    warn(`the surface leaves the bounds (${cells.closedAtBounds} samples on the outer layer are inside); it was closed at the bounds, treating outside the bounds as outside`);
  }
  if (cells.nonFinite > 0) warn(`${cells.nonFinite} samples were NaN or ±Inf and were treated as outside (--nonfinite outside)`);

  throwIfAborted(options.signal);
  progress('extract', 0);
  t = performance.now();
  const mesh = marchingCubes(cells);
  timings.extract = secs(t);

  t = performance.now();
  mesh.normals = areaWeightedNormals(mesh.positions, mesh.indices);
  timings.normals = secs(t);

  if (field.hasColor && field.evaluateColor) {
    throwIfAborted(options.signal);
    progress('color', 0);
    t = performance.now();
    const rgb = await field.evaluateColor(mesh.positions, options.signal);
    for (let i = 0; i < rgb.length; i++) rgb[i] = Number.isFinite(rgb[i]) ? Math.min(1, Math.max(0, rgb[i])) : 0;
    mesh.colors = rgb;
    timings.color = secs(t);
  }

  progress('check', 0);
  t = performance.now();
  const check = analyzeMesh(mesh);
  timings.check = secs(t);
  if (!check.watertight) {
    warn(
      `the mesh is not watertight: ${check.boundaryEdges} boundary edges, ${check.nonManifoldEdges} non-manifold edges, ` +
        `${check.nonManifoldVertices} non-manifold vertices, ${check.inconsistentEdges} inconsistently wound edges`,
    );
  }

  let glb: Uint8Array | undefined;
  if (!options.skipExport) {
    throwIfAborted(options.signal);
    progress('export', 0);
    t = performance.now();
    glb = await writeGlb(mesh, {
      extras: {
        source: { kind: field.kind, name: field.description.name, ...(options.provenance ?? {}) },
        options: { depth, level, bounds, method },
      },
    });
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
      depth,
      cellSize: cells.lattice.cellSize,
      latticeCells: cells.lattice.cells,
      evaluations: cells.evaluations,
      denseEvaluations: cells.denseEvaluations,
      evaluationRatio: cells.evaluations / cells.denseEvaluations,
      surfaceCells: cells.count,
      closedAtBounds: cells.closedAtBounds,
      nonFinite: cells.nonFinite,
      valueRange: [vmin, vmax],
    },
    mesh: { method, ...meshFigures, perComponent, where },
    timings,
    warnings,
  };
  return { mesh, report, glb, cells };
}

function secs(since: number): number {
  return Math.round(performance.now() - since) / 1000;
}

function fmt(v: number): string {
  return Number(v.toPrecision(6)).toString();
}
