/**
 * The distinct lattice nodes at the corners of a sampler's surface cells: what any method that
 * contours those cells must evaluate, the floor the benchmark and the sampler tests measure against.
 */
import type { SurfaceCells } from '../../core/sampling/sample-octree.js';

export function surfaceCellCorners(cells: SurfaceCells): number {
  const [nx, ny] = cells.lattice.cells;
  const keys = new Float64Array(cells.count * 8);
  for (let r = 0; r < cells.count; r++) {
    const i = cells.coords[3 * r], j = cells.coords[3 * r + 1], k = cells.coords[3 * r + 2];
    for (let q = 0; q < 8; q++) keys[8 * r + q] = i + (q & 1) + (nx + 1) * (j + ((q >> 1) & 1) + (ny + 1) * (k + ((q >> 2) & 1)));
  }
  keys.sort();
  let distinct = 0;
  for (let q = 0; q < keys.length; q++) if (q === 0 || keys[q] !== keys[q - 1]) distinct++;
  return distinct;
}
