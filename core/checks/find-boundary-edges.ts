import type { EdgeTable } from './edge-table.js';

/**
 * Boundary edges: edges used by exactly one triangle. A mesh without them has no holes.
 * Returns the edge ids (into the table).
 */
export function findBoundaryEdges(edges: EdgeTable): number[] {
  const out: number[] = [];
  for (let e = 0; e < edges.count; e++) if (edges.forward[e] + edges.backward[e] === 1) out.push(e);
  return out;
}
