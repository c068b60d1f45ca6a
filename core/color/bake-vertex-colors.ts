/**
 * Vertex colors from the field, baked onto the final (decimated) mesh, so each vertex carries the
 * field's color at its own position rather than a color carried over from a vertex that was
 * collapsed away.
 *
 * Where a vertex stands for a larger area than the sampling resolved (its share of the
 * surrounding triangles, a third of each, exceeds {@link BAKE_COLORS_DEFAULTS}.spreadCells² cells),
 * one point sample would speckle: it says what the field is at one point of a large patch. There
 * the color is an area-weighted average over the vertex's own share of each neighbouring triangle
 * (the quadrilateral vertex – edge midpoint – triangle centroid – edge midpoint, a third of the
 * triangle), sampled at the centroids of the two triangles that quadrilateral splits into
 * (barycentric weights 11/18, 5/18, 1/9 and 11/18, 1/9, 5/18 on the vertex and the two others;
 * each a sixth of the triangle's area), plus the vertex itself weighted by one cell's area. The points lie on the flat triangles, within a
 * triangle's sagitta of the surface; field colors vary slowly across that.
 *
 * Colors are linear RGB in 0..1, which is what glTF's COLOR_0 holds. Field sources give linear RGB
 * (the fixture convention; recipe colors are linear too): a source with sRGB colors must convert
 * them to linear before they reach the mesh. Non-finite values become 0 and everything is clamped
 * to 0..1.
 */
import type { Field } from '../fields/field.js';
import type { MeshData } from '../types.js';
import { throwIfAborted } from '../types.js';

const NAME = 'bakeVertexColors';

/** Options for {@link bakeVertexColors}. */
export interface BakeColorsOptions {
  /** Edge length of a sampling cell, metres: the area a single sample stands for is its square. Required. */
  cellSize: number;
  /** Vertices whose share of area exceeds (spreadCells × cellSize)² are averaged. Default: see {@link BAKE_COLORS_DEFAULTS}. */
  spreadCells?: number;
  /** Points per call to `field.evaluateColor`. Default: 131 072. */
  batchPoints?: number;
  signal?: AbortSignal;
}

/** Defaults of {@link bakeVertexColors}. */
export const BAKE_COLORS_DEFAULTS = {
  /** Our own choice: about two cells' worth of area per vertex is where an undecimated MC mesh ends. */
  spreadCells: 1.5,
  batchPoints: 131_072,
};

/** Result of {@link bakeVertexColors}. */
export interface BakeColorsResult {
  /** Linear RGB 0..1, 3 floats per vertex. */
  colors: Float32Array;
  /** Vertices whose color is an average over their neighbourhood. */
  averagedVertices: number;
  /** Color points evaluated. */
  evaluations: number;
  /** Non-finite color components replaced by 0. */
  nonFinite: number;
}

/**
 * Bakes the field's colors onto `mesh`'s vertices (see the file comment).
 * @example
 * const { colors } = await bakeVertexColors(field, mesh, { cellSize: 0.01 });
 */
export async function bakeVertexColors(field: Field, mesh: MeshData, options: BakeColorsOptions): Promise<BakeColorsResult> {
  if (!field.hasColor || !field.evaluateColor) throw new Error(`${NAME}: the field has no color`);
  const h = options.cellSize;
  if (!(h > 0) || !Number.isFinite(h)) throw new Error(`${NAME}: cellSize must be a positive number of metres (got ${h})`);
  const spread = options.spreadCells ?? BAKE_COLORS_DEFAULTS.spreadCells;
  const batch = Math.max(1, options.batchPoints ?? BAKE_COLORS_DEFAULTS.batchPoints);
  const { positions: p, indices: idx } = mesh;
  const V = p.length / 3;
  const T = idx.length / 3;

  // Each vertex's share of area: a third of each triangle around it.
  const share = new Float64Array(V);
  const triArea = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    const a = idx[3 * t], b = idx[3 * t + 1], c = idx[3 * t + 2];
    const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
    const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
    const cx = uy * vz - uz * vy, cy = uz * vx - ux * vz, cz = ux * vy - uy * vx;
    const area = 0.5 * Math.sqrt(cx * cx + cy * cy + cz * cz); // not Math.hypot (slower)
    triArea[t] = area;
    share[a] += area / 3;
    share[b] += area / 3;
    share[c] += area / 3;
  }
  const cellArea = h * h;
  const limit = spread * spread * cellArea;
  const averaged = new Uint8Array(V);
  let averagedVertices = 0;
  for (let v = 0; v < V; v++) {
    if (share[v] > limit) {
      averaged[v] = 1;
      averagedVertices++;
    }
  }

  // Sample points: every vertex, then one point per (averaged vertex, incident triangle).
  const extra: number[] = []; // (vertex, x, y, z, weight) per point
  for (let t = 0; t < T; t++) {
    if (averagedVertices === 0) break;
    if (!averaged[idx[3 * t]] && !averaged[idx[3 * t + 1]] && !averaged[idx[3 * t + 2]]) continue;
    const c3 = [idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]];
    for (let k = 0; k < 3; k++) {
      const v = c3[k];
      if (!averaged[v]) continue;
      const b = c3[(k + 1) % 3], c = c3[(k + 2) % 3];
      for (const [wb, wc] of [[5 / 18, 1 / 9], [1 / 9, 5 / 18]]) {
        const pt = [0, 1, 2].map((a) => (11 / 18) * p[3 * v + a] + wb * p[3 * b + a] + wc * p[3 * c + a]);
        extra.push(v, pt[0], pt[1], pt[2], triArea[t] / 6);
      }
    }
  }
  const nExtra = extra.length / 5;
  const points = new Float32Array(3 * (V + nExtra));
  points.set(p);
  for (let i = 0; i < nExtra; i++) points.set([extra[5 * i + 1], extra[5 * i + 2], extra[5 * i + 3]], 3 * (V + i));
  const rgb = new Float32Array(points.length);
  for (let s = 0; s < V + nExtra; s += batch) {
    throwIfAborted(options.signal);
    const e = Math.min(V + nExtra, s + batch);
    rgb.set(await field.evaluateColor(points.subarray(3 * s, 3 * e), options.signal), 3 * s);
  }
  let nonFinite = 0;
  for (let i = 0; i < rgb.length; i++) {
    if (!Number.isFinite(rgb[i])) {
      rgb[i] = 0;
      nonFinite++;
    } else rgb[i] = Math.min(1, Math.max(0, rgb[i]));
  }

  const sum = new Float64Array(3 * V);
  const wsum = new Float64Array(V);
  for (let v = 0; v < V; v++) {
    const w = averaged[v] ? cellArea : 1;
    for (let k = 0; k < 3; k++) sum[3 * v + k] = w * rgb[3 * v + k];
    wsum[v] = w;
  }
  for (let i = 0; i < nExtra; i++) {
    const v = extra[5 * i];
    const w = extra[5 * i + 4];
    for (let k = 0; k < 3; k++) sum[3 * v + k] += w * rgb[3 * (V + i) + k];
    wsum[v] += w;
  }
  const colors = new Float32Array(3 * V);
  for (let v = 0; v < V; v++) for (let k = 0; k < 3; k++) colors[3 * v + k] = sum[3 * v + k] / wsum[v];
  return { colors, averagedVertices, evaluations: V + nExtra, nonFinite };
}
