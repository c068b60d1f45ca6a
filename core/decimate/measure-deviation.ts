/**
 * How far two meshes of the same surface stray from each other: the largest distance from sample
 * points of each to the other (an estimate of the symmetric Hausdorff distance). The samples are
 * every vertex and every triangle centroid; for a decimated mesh, whose vertices are a subset of
 * the original's, that catches both the detail that was cut off (original vertices far from the
 * new triangles) and the new triangles bridging over it (their centroids far from the original).
 * Distances come from {@link TriangleGrid}.
 */
import type { MeshData } from '../types.js';
import { TriangleGrid } from './triangle-grid.js';

/** Result of {@link measureDeviation}, metres. */
export interface Deviation {
  /** Largest distance from a sample of `a` to `b`. */
  aToB: number;
  /** Largest distance from a sample of `b` to `a`. */
  bToA: number;
  /** The larger of the two. */
  max: number;
}

/**
 * Largest distances between `a` and `b` in both directions (see the file comment), metres.
 * `gridOfA`: a {@link TriangleGrid} of `a` already built (the same answer, without building it again).
 * @example
 * const { max } = measureDeviation(original, decimated);
 */
export function measureDeviation(a: MeshData, b: MeshData, gridOfA?: TriangleGrid): Deviation {
  const aToB = oneWay(a, new TriangleGrid(b));
  const bToA = oneWay(b, gridOfA ?? new TriangleGrid(a));
  return { aToB, bToA, max: Math.max(aToB, bToA) };
}

function oneWay(from: MeshData, to: TriangleGrid): number {
  const p = from.positions;
  const idx = from.indices;
  const used = new Uint8Array(p.length / 3);
  for (let i = 0; i < idx.length; i++) used[idx[i]] = 1;
  let worst = 0;
  for (let v = 0; v < used.length; v++) {
    // `worst` as `enough`: a point within it of the other mesh cannot raise the maximum, so its search
    // stops at the first triangle that close (the maximum itself is still exact).
    if (used[v]) worst = Math.max(worst, to.distance(p[3 * v], p[3 * v + 1], p[3 * v + 2], worst));
  }
  for (let t = 0; t < idx.length; t += 3) {
    const a = idx[t], b = idx[t + 1], c = idx[t + 2];
    worst = Math.max(
      worst,
      to.distance((p[3 * a] + p[3 * b] + p[3 * c]) / 3, (p[3 * a + 1] + p[3 * b + 1] + p[3 * c + 1]) / 3, (p[3 * a + 2] + p[3 * b + 2] + p[3 * c + 2]) / 3, worst),
    );
  }
  return worst;
}
