/**
 * Edge-manifold: no edge is used by more than two triangles (a duplicated triangle or three
 * sheets meeting along an edge break it).
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, edgeMidpoint, type CheckResult } from './check-result.js';
import { buildEdgeTable, type EdgeTable } from './edge-table.js';
import { findNonManifoldEdges } from './find-non-manifold-edges.js';

/**
 * Checks that every edge of `mesh` is used by at most two triangles. `where` lists midpoints of
 * edges used more often.
 * @param edges the mesh's edge table, when the caller already built it.
 */
export function isEdgeManifold(mesh: MeshData, edges?: EdgeTable): CheckResult {
  const table = edges ?? buildEdgeTable(mesh.indices, mesh.positions.length / 3);
  const bad = findNonManifoldEdges(table);
  return {
    name: 'edge-manifold',
    definition: 'no edge is used by more than two triangles',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'edges',
    where: bad.slice(0, CHECK_EXAMPLES).map((e) => edgeMidpoint(mesh.positions, table.ends[2 * e], table.ends[2 * e + 1])),
  };
}
