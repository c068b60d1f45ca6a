import type { EdgeTable } from './edge-table.js';

/**
 * Non-manifold edges: edges used by more than two triangles. An edge-manifold mesh has none.
 * Returns the edge ids (into the table).
 */
export function findNonManifoldEdges(edges: EdgeTable): number[] {
  const out: number[] = [];
  for (let e = 0; e < edges.count; e++) if (edges.forward[e] + edges.backward[e] > 2) out.push(e);
  return out;
}
