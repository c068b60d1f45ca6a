/**
 * No degenerate triangles: no triangle repeats a vertex index or has zero area (computed in
 * float64 from the stored float32 positions). Such triangles have no normal and upset shading,
 * collision and the simplifier.
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, triangleCentroid, type CheckResult } from './check-result.js';
import { findDegenerateTriangles } from './find-degenerate-triangles.js';

/**
 * Checks `mesh` for zero-area triangles. `where` lists their centroids.
 * @param minArea triangles with area at or below this count as degenerate, m². Default 0.
 * @param degenerate the mesh's degenerate triangles for this `minArea` (`findDegenerateTriangles`), when
 *   the caller already found them.
 */
export function hasNoDegenerateTriangles(mesh: MeshData, minArea = 0, degenerate?: number[]): CheckResult {
  const bad = degenerate ?? findDegenerateTriangles(mesh.positions, mesh.indices, minArea);
  return {
    name: 'no-degenerate-triangles',
    definition: 'no triangle repeats a vertex or has zero area',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'triangles',
    where: bad.slice(0, CHECK_EXAMPLES).map((t) => triangleCentroid(mesh.positions, mesh.indices, t)),
  };
}
