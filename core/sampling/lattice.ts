import type { Bounds } from '../types.js';

/**
 * The finest sampling lattice for a depth: cubic cells of side `cellSize`, with 2^depth cells
 * along the longest side of the bounds. Shorter sides get ceil(extent / cellSize) cells, and the
 * lattice is centred on the bounds, so it covers them (overhanging by under half a cell per side).
 */
export interface Lattice {
  depth: number;
  /** World position of node (0,0,0), metres. */
  origin: [number, number, number];
  /** Edge length of a finest cell, metres. */
  cellSize: number;
  /** Cells per axis [nx, ny, nz]; nodes per axis are one more. */
  cells: [number, number, number];
}

export function makeLattice(bounds: Bounds, depth: number): Lattice {
  const ext = [bounds[3] - bounds[0], bounds[4] - bounds[1], bounds[5] - bounds[2]];
  const longest = Math.max(ext[0], ext[1], ext[2]);
  const n = 2 ** depth;
  const h = longest / n;
  const cells = ext.map((e) => Math.min(n, Math.max(1, Math.ceil(e / h - 1e-9)))) as [number, number, number];
  const origin = [0, 1, 2].map((a) => (bounds[a] + bounds[a + 3]) / 2 - (cells[a] * h) / 2) as [number, number, number];
  return { depth, origin, cellSize: h, cells };
}

/** Number of nodes of the dense lattice: what evaluating everything would cost. */
export function denseNodeCount(l: Lattice): number {
  return (l.cells[0] + 1) * (l.cells[1] + 1) * (l.cells[2] + 1);
}

/** Linear key of node (i, j, k). */
export function nodeKey(l: Lattice, i: number, j: number, k: number): number {
  return i + (l.cells[0] + 1) * (j + (l.cells[1] + 1) * k);
}

/**
 * World positions of the lattice nodes in z-planes k0..k1 (inclusive), x fastest, then y, then z:
 * 3 floats per node. Default: every node.
 */
export function latticeNodePoints(l: Lattice, k0 = 0, k1 = l.cells[2]): Float32Array {
  const [nx, ny] = l.cells;
  const pts = new Float32Array((nx + 1) * (ny + 1) * (k1 - k0 + 1) * 3);
  let q = 0;
  for (let k = k0; k <= k1; k++)
    for (let j = 0; j <= ny; j++)
      for (let i = 0; i <= nx; i++) {
        pts[q++] = l.origin[0] + i * l.cellSize;
        pts[q++] = l.origin[1] + j * l.cellSize;
        pts[q++] = l.origin[2] + k * l.cellSize;
      }
  return pts;
}
