/**
 * Consistently wound: every edge shared by two triangles runs in opposite directions in them, so
 * all faces agree on which side is out. One flipped triangle breaks it along its three edges.
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, edgeMidpoint, type CheckResult } from './check-result.js';
import { buildEdgeTable, type EdgeTable } from './edge-table.js';
import { findInconsistentWinding } from './find-inconsistent-winding.js';

/**
 * Checks the winding of `mesh`. `where` lists midpoints of edges whose two triangles run the same way.
 * @param edges the mesh's edge table, when the caller already built it.
 */
export function isConsistentlyWound(mesh: MeshData, edges?: EdgeTable): CheckResult {
  const table = edges ?? buildEdgeTable(mesh.indices, mesh.positions.length / 3);
  const bad = findInconsistentWinding(table);
  return {
    name: 'consistently-wound',
    definition: 'every edge shared by two triangles runs in opposite directions in them',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'edges',
    where: bad.slice(0, CHECK_EXAMPLES).map((e) => edgeMidpoint(mesh.positions, table.ends[2 * e], table.ends[2 * e + 1])),
  };
}
