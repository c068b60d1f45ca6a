/**
 * Which surface point each texel of a square atlas stands for: the UV triangles are rasterized at
 * texel centres ((i + 0.5, j + 0.5) in texel units, row j = v·size from the top, glTF's
 * orientation), giving each covered texel its triangle and barycentric weights.
 *
 * Border texels: bilinear filtering at a point just inside a chart also reads the texels around it
 * whose centres lie outside the chart (up to one texel away on each axis). Those texels are given
 * the nearest point of the nearest triangle within √2 texels (barycentrics clamped to the triangle),
 * so they are baked from the surface at the chart's edge instead of being left to dilation.
 * Covered texels keep the first triangle that covers them (shared edges are continuous).
 */

const NAME = 'rasterizeAtlas';

/** Texel states in {@link AtlasRaster}.kind. */
export const TEXEL_EMPTY = 0;
export const TEXEL_COVERED = 1;
export const TEXEL_BORDER = 2;

/** Result of {@link rasterizeAtlas}. */
export interface AtlasRaster {
  /** Edge of the square atlas, texels. */
  size: number;
  /** Per texel (row-major, row 0 at v = 0): the triangle, or −1. */
  triangle: Int32Array;
  /** Per texel: barycentric weights of the triangle's 2nd and 3rd vertex (the 1st gets 1 − both). */
  bary: Float32Array;
  /** Per texel: TEXEL_EMPTY, TEXEL_COVERED (centre inside a triangle) or TEXEL_BORDER. */
  kind: Uint8Array;
  /** Texels whose centre is inside a triangle. */
  covered: number;
  /** Border texels (see the file comment). */
  border: number;
}

/**
 * Rasterizes the UV layout (see the file comment).
 * @param uvs 2 floats per vertex, 0..1 (glTF: v down the image).
 * @param indices 3 per triangle.
 * @param size atlas edge, texels.
 * @example
 * const raster = rasterizeAtlas(uvs, mesh.indices, 1024);
 * const coverage = raster.covered / (1024 * 1024);
 */
export function rasterizeAtlas(uvs: Float32Array, indices: Uint32Array, size: number): AtlasRaster {
  if (!Number.isInteger(size) || size < 1) throw new Error(`${NAME}: size must be a positive whole number of texels (got ${size})`);
  const N = size * size;
  const triangle = new Int32Array(N).fill(-1);
  const bary = new Float32Array(2 * N);
  const kind = new Uint8Array(N);
  const dist = new Float32Array(N).fill(Infinity);
  let covered = 0;
  let border = 0;
  const T = indices.length / 3;
  const reach = Math.SQRT2;

  for (let pass = 0; pass < 2; pass++) {
    for (let t = 0; t < T; t++) {
      const i0 = indices[3 * t], i1 = indices[3 * t + 1], i2 = indices[3 * t + 2];
      const ax = uvs[2 * i0] * size, ay = uvs[2 * i0 + 1] * size;
      const bx = uvs[2 * i1] * size, by = uvs[2 * i1 + 1] * size;
      const cx = uvs[2 * i2] * size, cy = uvs[2 * i2 + 1] * size;
      const det = (bx - ax) * (cy - ay) - (cx - ax) * (by - ay);
      if (det === 0 || !Number.isFinite(det)) continue;
      const grow = pass === 0 ? 0 : reach;
      const x0 = Math.max(0, Math.floor(Math.min(ax, bx, cx) - grow - 0.5));
      const x1 = Math.min(size - 1, Math.ceil(Math.max(ax, bx, cx) + grow - 0.5));
      const y0 = Math.max(0, Math.floor(Math.min(ay, by, cy) - grow - 0.5));
      const y1 = Math.min(size - 1, Math.ceil(Math.max(ay, by, cy) + grow - 0.5));
      for (let y = y0; y <= y1; y++) {
        const py = y + 0.5;
        for (let x = x0; x <= x1; x++) {
          const px = x + 0.5;
          const texel = y * size + x;
          // Barycentrics of the texel centre (b1 for vertex 1, b2 for vertex 2).
          const b1 = ((px - ax) * (cy - ay) - (cx - ax) * (py - ay)) / det;
          const b2 = ((bx - ax) * (py - ay) - (px - ax) * (by - ay)) / det;
          const inside = b1 >= -1e-9 && b2 >= -1e-9 && 1 - b1 - b2 >= -1e-9;
          if (pass === 0) {
            if (!inside || kind[texel] === TEXEL_COVERED) continue;
            kind[texel] = TEXEL_COVERED;
            triangle[texel] = t;
            bary[2 * texel] = b1;
            bary[2 * texel + 1] = b2;
            covered++;
            continue;
          }
          if (kind[texel] === TEXEL_COVERED) continue;
          nearestOnTriangle(px, py, ax, ay, bx, by, cx, cy);
          if (near.d >= reach || near.d >= dist[texel]) continue;
          if (kind[texel] === TEXEL_EMPTY) border++;
          kind[texel] = TEXEL_BORDER;
          dist[texel] = near.d;
          triangle[texel] = t;
          bary[2 * texel] = near.b1;
          bary[2 * texel + 1] = near.b2;
        }
      }
    }
  }
  return { size, triangle, bary, kind, covered, border };
}

/** What {@link nearestOnTriangle} found (reused, so the inner loop allocates nothing). */
const near = { d: Infinity, b1: 0, b2: 0 };

/** Nearest point of triangle abc to p (p outside it) into `near`: its distance and barycentrics (b1 on b, b2 on c). */
function nearestOnTriangle(px: number, py: number, ax: number, ay: number, bx: number, by: number, cx: number, cy: number): void {
  near.d = Infinity;
  for (let e = 0; e < 3; e++) {
    // Edge e: a→b, b→c, c→a; weight (1 − s) on its start and s on its end.
    const sx = e === 0 ? ax : e === 1 ? bx : cx, sy = e === 0 ? ay : e === 1 ? by : cy;
    const ex = e === 0 ? bx : e === 1 ? cx : ax, ey = e === 0 ? by : e === 1 ? cy : ay;
    const dx = ex - sx, dy = ey - sy;
    const len2 = dx * dx + dy * dy;
    const s = len2 > 0 ? Math.min(1, Math.max(0, ((px - sx) * dx + (py - sy) * dy) / len2)) : 0;
    const d = Math.hypot(px - (sx + s * dx), py - (sy + s * dy));
    if (d >= near.d) continue;
    near.d = d;
    near.b1 = e === 0 ? s : e === 1 ? 1 - s : 0;
    near.b2 = e === 0 ? 0 : e === 1 ? s : 1 - s;
  }
}
