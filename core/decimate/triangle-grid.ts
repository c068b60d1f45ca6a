/**
 * Closest-point queries against a triangle mesh through a uniform grid: each triangle is filed in
 * every cell its bounding box touches, and a query searches shells of cells around its own cell,
 * nearest first, until no unsearched cell can hold anything closer. The point–triangle distance is
 * the region-based closest point of Ericson, "Real-Time Collision Detection" (2005), §5.1.5.
 *
 * Used to measure how far a decimated mesh strays from the mesh it came from; the points asked
 * about lie near the surface, where a grid sized to the triangles answers after one or two shells.
 */
import type { MeshData } from '../types.js';

/** Cells the grid may have at most; the cell size grows to stay below it. */
const MAX_CELLS = 1 << 22;

/** A uniform grid over the triangles of one mesh. */
export class TriangleGrid {
  private readonly p: Float32Array;
  private readonly idx: Uint32Array;
  private readonly origin: [number, number, number];
  private readonly size: number;
  private readonly dims: [number, number, number];
  private readonly start: Uint32Array;
  private readonly items: Uint32Array;
  /** Bounding box of each triangle: xmin, ymin, zmin, xmax, ymax, zmax. */
  private readonly boxes: Float32Array;

  /**
   * Files the triangles of `mesh`.
   * @param cellSize edge length of a cell, metres. Default: the side of a square of the mean
   *   triangle area.
   */
  constructor(mesh: MeshData, cellSize?: number) {
    const { positions: p, indices: idx } = mesh;
    const T = idx.length / 3;
    if (T === 0) throw new Error('TriangleGrid: the mesh has no triangles');
    this.p = p;
    this.idx = idx;
    const lo = [Infinity, Infinity, Infinity];
    const hi = [-Infinity, -Infinity, -Infinity];
    let area = 0;
    for (let t = 0; t < T; t++) {
      for (let k = 0; k < 3; k++) {
        const v = idx[3 * t + k];
        for (let a = 0; a < 3; a++) {
          lo[a] = Math.min(lo[a], p[3 * v + a]);
          hi[a] = Math.max(hi[a], p[3 * v + a]);
        }
      }
      area += triArea(p, idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]);
    }
    const ext = [0, 1, 2].map((a) => Math.max(hi[a] - lo[a], 1e-12));
    let s = cellSize ?? Math.sqrt(area / T);
    if (!(s > 0)) s = Math.max(...ext) / 64;
    while (ext.reduce((n, e) => n * (Math.floor(e / s) + 1), 1) > MAX_CELLS) s *= 1.5;
    this.size = s;
    this.origin = [lo[0], lo[1], lo[2]];
    this.dims = [0, 1, 2].map((a) => Math.floor(ext[a] / s) + 1) as [number, number, number];
    const [nx, ny, nz] = this.dims;
    const counts = new Uint32Array(nx * ny * nz + 1);
    const range = (t: number, out: Int32Array) => {
      for (let a = 0; a < 3; a++) {
        out[a] = this.cellOf(this.boxes[6 * t + a], a);
        out[a + 3] = this.cellOf(this.boxes[6 * t + a + 3], a);
      }
    };
    this.boxes = new Float32Array(6 * T);
    const r = new Int32Array(6);
    for (let t = 0; t < T; t++) {
      for (let a = 0; a < 3; a++) {
        let mn = Infinity, mx = -Infinity;
        for (let k = 0; k < 3; k++) {
          const x = p[3 * idx[3 * t + k] + a];
          if (x < mn) mn = x;
          if (x > mx) mx = x;
        }
        this.boxes[6 * t + a] = mn;
        this.boxes[6 * t + a + 3] = mx;
      }
    }
    const forEachCell = (fn: (t: number, c: number) => void) => {
      for (let t = 0; t < T; t++) {
        range(t, r);
        for (let k = r[2]; k <= r[5]; k++)
          for (let j = r[1]; j <= r[4]; j++) for (let i = r[0]; i <= r[3]; i++) fn(t, i + nx * (j + ny * k));
      }
    };
    forEachCell((_, c) => counts[c + 1]++);
    for (let c = 0; c < nx * ny * nz; c++) counts[c + 1] += counts[c];
    this.start = counts.slice();
    this.items = new Uint32Array(counts[nx * ny * nz]);
    const fill = counts.subarray(0, nx * ny * nz);
    forEachCell((t, c) => {
      this.items[fill[c]++] = t;
    });
  }

  private cellOf(x: number, axis: number): number {
    const c = Math.floor((x - this.origin[axis]) / this.size);
    return c < 0 ? 0 : c >= this.dims[axis] ? this.dims[axis] - 1 : c;
  }

  /**
   * Distance from (x, y, z) to the nearest point of the mesh, metres. With `enough` > 0 the search
   * stops at the first triangle within `enough` and returns that triangle's distance (≤ `enough`, not
   * necessarily the nearest): what a running maximum needs, since such a point cannot raise it.
   */
  distance(x: number, y: number, z: number, enough = 0): number {
    const enough2 = enough * enough;
    const [nx, ny, nz] = this.dims;
    const { start, items, boxes: b, p, idx } = this;
    const ci = this.cellOf(x, 0), cj = this.cellOf(y, 1), ck = this.cellOf(z, 2);
    let best = Infinity;
    for (let r = 0; ; r++) {
      const i0 = ci - r, i1 = ci + r, j0 = cj - r, j1 = cj + r, k0 = ck - r, k1 = ck + r;
      for (let k = Math.max(k0, 0); k <= Math.min(k1, nz - 1); k++) {
        for (let j = Math.max(j0, 0); j <= Math.min(j1, ny - 1); j++) {
          const onShellJK = k === k0 || k === k1 || j === j0 || j === j1;
          // Inside the shell's j/k range only its two i ends are new cells.
          const step = onShellJK ? 1 : Math.max(1, i1 - i0);
          for (let i = onShellJK ? Math.max(i0, 0) : i0; i <= Math.min(i1, nx - 1); i += step) {
            if (i < 0) continue;
            const c = i + nx * (j + ny * k);
            for (let q = start[c], qe = start[c + 1]; q < qe; q++) {
              const t = items[q];
              const o = 6 * t;
              const dx = x < b[o] ? b[o] - x : x > b[o + 3] ? x - b[o + 3] : 0;
              const dy = y < b[o + 1] ? b[o + 1] - y : y > b[o + 4] ? y - b[o + 4] : 0;
              const dz = z < b[o + 2] ? b[o + 2] - z : z > b[o + 5] ? z - b[o + 5] : 0;
              if (dx * dx + dy * dy + dz * dz >= best) continue;
              const d2 = pointTriangleDistance2(x, y, z, p, idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]);
              if (d2 < best) {
                best = d2;
                if (best <= enough2) return Math.sqrt(best);
              }
            }
          }
        }
      }
      // Nothing outside the searched block of cells is nearer than the block's boundary; sides at
      // the edge of the grid have nothing beyond them.
      const o = this.origin, sz = this.size;
      let reach = Infinity;
      if (i0 > 0) reach = Math.min(reach, x - (o[0] + i0 * sz));
      if (i1 < nx - 1) reach = Math.min(reach, o[0] + (i1 + 1) * sz - x);
      if (j0 > 0) reach = Math.min(reach, y - (o[1] + j0 * sz));
      if (j1 < ny - 1) reach = Math.min(reach, o[1] + (j1 + 1) * sz - y);
      if (k0 > 0) reach = Math.min(reach, z - (o[2] + k0 * sz));
      if (k1 < nz - 1) reach = Math.min(reach, o[2] + (k1 + 1) * sz - z);
      if (best <= reach * reach) break;
    }
    return Math.sqrt(best);
  }
}

function triArea(p: Float32Array, a: number, b: number, c: number): number {
  const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
  const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
  const cx = uy * vz - uz * vy, cy = uz * vx - ux * vz, cz = ux * vy - uy * vx;
  return 0.5 * Math.sqrt(cx * cx + cy * cy + cz * cz); // not Math.hypot (slower)
}

/** Squared distance from point (px, py, pz) to triangle (a, b, c) of `p` (Ericson §5.1.5). */
export function pointTriangleDistance2(px: number, py: number, pz: number, p: Float32Array, a: number, b: number, c: number): number {
  const ax = p[3 * a], ay = p[3 * a + 1], az = p[3 * a + 2];
  const abx = p[3 * b] - ax, aby = p[3 * b + 1] - ay, abz = p[3 * b + 2] - az;
  const acx = p[3 * c] - ax, acy = p[3 * c + 1] - ay, acz = p[3 * c + 2] - az;
  const apx = px - ax, apy = py - ay, apz = pz - az;
  const d1 = abx * apx + aby * apy + abz * apz;
  const d2 = acx * apx + acy * apy + acz * apz;
  let qx: number, qy: number, qz: number;
  if (d1 <= 0 && d2 <= 0) {
    qx = ax; qy = ay; qz = az;
  } else {
    const bpx = px - p[3 * b], bpy = py - p[3 * b + 1], bpz = pz - p[3 * b + 2];
    const d3 = abx * bpx + aby * bpy + abz * bpz;
    const d4 = acx * bpx + acy * bpy + acz * bpz;
    const cpx = px - p[3 * c], cpy = py - p[3 * c + 1], cpz = pz - p[3 * c + 2];
    const d5 = abx * cpx + aby * cpy + abz * cpz;
    const d6 = acx * cpx + acy * cpy + acz * cpz;
    const vc = d1 * d4 - d3 * d2;
    const vb = d5 * d2 - d1 * d6;
    const va = d3 * d6 - d5 * d4;
    if (d3 >= 0 && d4 <= d3) {
      qx = p[3 * b]; qy = p[3 * b + 1]; qz = p[3 * b + 2];
    } else if (vc <= 0 && d1 >= 0 && d3 <= 0) {
      const v = d1 / (d1 - d3);
      qx = ax + v * abx; qy = ay + v * aby; qz = az + v * abz;
    } else if (d6 >= 0 && d5 <= d6) {
      qx = p[3 * c]; qy = p[3 * c + 1]; qz = p[3 * c + 2];
    } else if (vb <= 0 && d2 >= 0 && d6 <= 0) {
      const w = d2 / (d2 - d6);
      qx = ax + w * acx; qy = ay + w * acy; qz = az + w * acz;
    } else if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0) {
      const w = (d4 - d3) / (d4 - d3 + (d5 - d6));
      qx = p[3 * b] + w * (p[3 * c] - p[3 * b]); qy = p[3 * b + 1] + w * (p[3 * c + 1] - p[3 * b + 1]); qz = p[3 * b + 2] + w * (p[3 * c + 2] - p[3 * b + 2]);
    } else {
      const denom = va + vb + vc;
      if (denom === 0) {
        // Zero-area triangle: fall back to its vertices.
        return Math.min(
          apx * apx + apy * apy + apz * apz,
          bpx * bpx + bpy * bpy + bpz * bpz,
          cpx * cpx + cpy * cpy + cpz * cpz,
        );
      }
      const v = vb / denom, w = vc / denom;
      qx = ax + abx * v + acx * w; qy = ay + aby * v + acy * w; qz = az + abz * v + acz * w;
    }
  }
  const dx = px - qx, dy = py - qy, dz = pz - qz;
  return dx * dx + dy * dy + dz * dz;
}
