/**
 * The endpoints of a mesh's open and non-manifold edges, as flat segment lists a viewer can draw
 * (the desktop app highlights them so a hole is found at a glance).
 *
 * Words as in analyze-mesh.ts: an open (boundary) edge is used by exactly one triangle; a
 * non-manifold edge by three or more.
 */
import type { MeshData } from '../types.js';
import { buildEdgeTable } from './edge-table.js';
import { findBoundaryEdges } from './find-boundary-edges.js';
import { findNonManifoldEdges } from './find-non-manifold-edges.js';

/** Segments: 2 points per edge, 6 floats (x0, y0, z0, x1, y1, z1) per edge, metres. */
export interface ProblemEdges {
  /** Edges used by exactly one triangle. */
  open: Float32Array;
  /** Edges used by three or more triangles. */
  nonManifold: Float32Array;
}

/**
 * Collects the open and non-manifold edges of `mesh` as line segments.
 *
 * @param mesh - Indexed triangles: `positions` 3 floats per vertex, `indices` 3 per triangle.
 * @returns Two segment lists, 6 floats per edge, in the order the edges are first met.
 * @example
 * const { open } = collectProblemEdges({ positions, indices });
 * console.log(`${open.length / 6} open edges`);
 */
export function collectProblemEdges(mesh: Pick<MeshData, 'positions' | 'indices'>): ProblemEdges {
  const { positions, indices } = mesh;
  if (positions.length % 3 !== 0) throw new Error('collectProblemEdges: positions must hold 3 floats per vertex');
  if (indices.length % 3 !== 0) throw new Error('collectProblemEdges: indices must hold 3 per triangle');
  const edges = buildEdgeTable(indices, positions.length / 3);
  return {
    open: segments(positions, edges.ends, findBoundaryEdges(edges)),
    nonManifold: segments(positions, edges.ends, findNonManifoldEdges(edges)),
  };
}

function segments(positions: Float32Array, ends: Uint32Array, ids: number[]): Float32Array {
  const out = new Float32Array(ids.length * 6);
  for (let i = 0; i < ids.length; i++) {
    const a = ends[2 * ids[i]];
    const b = ends[2 * ids[i] + 1];
    out[6 * i] = positions[3 * a];
    out[6 * i + 1] = positions[3 * a + 1];
    out[6 * i + 2] = positions[3 * a + 2];
    out[6 * i + 3] = positions[3 * b];
    out[6 * i + 4] = positions[3 * b + 1];
    out[6 * i + 5] = positions[3 * b + 2];
  }
  return out;
}
