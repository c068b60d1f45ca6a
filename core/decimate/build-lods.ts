/**
 * Levels of detail: a chain of further decimations, each to about half the triangles of the level
 * before it. Every level is decimated from the same full-resolution mesh (not from the level
 * before), so errors do not pile up from level to level, and each is checked like the base level
 * (`decimate-mesh.ts`). `maxError` of a level is its distance from that full-resolution mesh.
 */
import type { MeshData } from '../types.js';
import type { MeshReport } from '../checks/analyze-mesh.js';
import { decimateMesh, type DecimateOptions, type DecimateResult } from './decimate-mesh.js';

/** The fewest triangles a level may ask for; the chain ends before going below it. */
export const MIN_LOD_TRIANGLES = 16;

/**
 * `levels` further levels after a base level of `baseTriangles` triangles.
 * @param full the full-resolution mesh every level is decimated from.
 * @param baseTriangles triangles of the base level (level 0), which the caller already has.
 * @param levels how many further levels, ≥ 0.
 * @returns one result per level made (fewer than `levels` when the next would fall below
 *   {@link MIN_LOD_TRIANGLES}, with a warning in the last result).
 * @example
 * const lods = await buildLods(mesh, base.triangles, 3);
 */
export async function buildLods(
  full: MeshData,
  baseTriangles: number,
  levels: number,
  options: Omit<DecimateOptions, 'targetTriangles'> & { inputReport?: MeshReport } = {},
): Promise<DecimateResult[]> {
  if (!Number.isInteger(levels) || levels < 0) throw new Error(`buildLods: levels must be a whole number ≥ 0 (got ${levels})`);
  const out: DecimateResult[] = [];
  let previous = baseTriangles;
  for (let i = 1; i <= levels; i++) {
    const target = Math.floor(previous / 2);
    if (target < MIN_LOD_TRIANGLES) {
      if (out.length) out[out.length - 1].warnings.push(`only ${out.length} of ${levels} LODs were made: the next would have under ${MIN_LOD_TRIANGLES} triangles`);
      break;
    }
    const r = await decimateMesh(full, { ...options, targetTriangles: target });
    out.push(r);
    previous = r.triangles;
  }
  return out;
}
