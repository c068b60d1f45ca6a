import type { EdgeTable } from './edge-table.js';

/**
 * Edges whose two triangles run along them in the same direction: there, one of the two faces is
 * flipped relative to the other. A consistently wound mesh has none.
 * Returns the edge ids (into the table).
 */
export function findInconsistentWinding(edges: EdgeTable): number[] {
  const out: number[] = [];
  for (let e = 0; e < edges.count; e++) {
    const f = edges.forward[e];
    const b = edges.backward[e];
    if (f + b === 2 && (f === 2 || b === 2)) out.push(e);
  }
  return out;
}
