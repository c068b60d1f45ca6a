/**
 * Closed: no boundary edges, i.e. every edge is used by at least two triangles, so the surface
 * has no holes. (An edge used by more than two triangles is closed but not edge-manifold; see
 * `is-edge-manifold.ts`.)
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, edgeMidpoint, type CheckResult } from './check-result.js';
import { buildEdgeTable, type EdgeTable } from './edge-table.js';
import { findBoundaryEdges } from './find-boundary-edges.js';

/**
 * Checks that `mesh` has no boundary edges. `where` lists midpoints of boundary edges.
 * @param edges the mesh's edge table, when the caller already built it.
 * @example
 * if (!isClosed(mesh).ok) console.log('holes near', isClosed(mesh).where);
 */
export function isClosed(mesh: MeshData, edges?: EdgeTable): CheckResult {
  const table = edges ?? buildEdgeTable(mesh.indices, mesh.positions.length / 3);
  const bad = findBoundaryEdges(table);
  return {
    name: 'closed',
    definition: 'no boundary edges: every edge is used by at least two triangles',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'edges',
    where: bad.slice(0, CHECK_EXAMPLES).map((e) => edgeMidpoint(mesh.positions, table.ends[2 * e], table.ends[2 * e + 1])),
  };
}
