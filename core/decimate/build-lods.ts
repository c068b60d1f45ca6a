/**
 * Levels of detail: a chain of further decimations, each to about half the triangles of the level
 * before it, and each decimated from that level (its vertices, normals and colors are input vertices),
 * checked like the base level (`decimate-mesh.ts`). `maxError` of a level is its distance from the
 * full-resolution mesh, measured (`measure-deviation.ts`), not the step's own error.
 *
 * Measured (depth-9 sphere_sdf.onnx and torus_sdf.onnx meshes, 1.10 M and 0.90 M triangles, base level
 * 50 000, levels of 25 000, 12 500 and 6 250): decimating every level from the full mesh took 1.5–2.7 s
 * per level on the sphere and 0.9–1.1 s on the torus; from the level before, 24–200 ms (plus about
 * 0.35 s to measure the distance from the full mesh). The distances from the full mesh were no worse
 * overall: sphere 0.78 / 0.99 / 1.31 mm against 0.60 / 1.00 / 1.37 mm from the full mesh, torus
 * 1.83 / 2.99 / 5.18 mm against 2.08 / 2.95 / 6.70 mm.
 */
import type { MeshData } from '../types.js';
import type { MeshReport } from '../checks/analyze-mesh.js';
import { decimateMesh, type DecimateOptions, type DecimateResult } from './decimate-mesh.js';
import { measureDeviation } from './measure-deviation.js';
import { TriangleGrid } from './triangle-grid.js';

/** The fewest triangles a level may ask for; the chain ends before going below it. */
export const MIN_LOD_TRIANGLES = 16;

/**
 * `levels` further levels after a base level.
 * @param full the full-resolution mesh the levels' distances are measured from (`options.inputGrid`
 *   and `options.inputReport`, when given, are its grid and report).
 * @param base the base level (level 0), which the caller already has: `full` itself, or a decimation
 *   of it. Level 1 is decimated from it, each further level from the level before.
 * @param levels how many further levels, ≥ 0.
 * @returns one result per level made (fewer than `levels` when the next would fall below
 *   {@link MIN_LOD_TRIANGLES}, with a warning in the last result).
 * @example
 * const lods = await buildLods(mesh, base, 3);
 */
export async function buildLods(
  full: MeshData,
  base: MeshData,
  levels: number,
  options: Omit<DecimateOptions, 'targetTriangles'> & { inputReport?: MeshReport } = {},
): Promise<DecimateResult[]> {
  if (!Number.isInteger(levels) || levels < 0) throw new Error(`buildLods: levels must be a whole number ≥ 0 (got ${levels})`);
  const out: DecimateResult[] = [];
  let from = base;
  let fullGrid = options.inputGrid;
  for (let i = 1; i <= levels; i++) {
    const target = Math.floor(from.indices.length / 3 / 2);
    if (target < MIN_LOD_TRIANGLES) {
      if (out.length) out[out.length - 1].warnings.push(`only ${out.length} of ${levels} LODs were made: the next would have under ${MIN_LOD_TRIANGLES} triangles`);
      break;
    }
    // The full mesh's grid and report serve only a level decimated from the full mesh itself.
    const r = await decimateMesh(from, from === full ? { ...options, targetTriangles: target } : { ...options, inputGrid: undefined, inputReport: undefined, targetTriangles: target });
    if (from !== full) {
      fullGrid ??= new TriangleGrid(full);
      r.maxError = measureDeviation(full, r.mesh, fullGrid).max;
    }
    out.push(r);
    from = r.mesh;
  }
  return out;
}
