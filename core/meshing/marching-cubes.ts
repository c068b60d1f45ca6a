/**
 * Marching cubes over the sparse surface cells found by the octree sampler (Lorensen and Cline 1987,
 * "Marching cubes: a high resolution 3D surface construction algorithm"), with each cell's polygons
 * found by walking its faces and face ambiguities resolved by the asymptotic decider (see
 * `cell-loops.ts`). The result is topologically consistent between neighbouring cells: for a surface
 * closed inside the lattice it is watertight, edge- and vertex-manifold and wound outward.
 *
 * - One vertex per sign-changing lattice edge, created once and shared (an edge map, as in libigl's
 *   marching cubes), so the mesh is indexed by construction: no welding by float comparison. The
 *   cells arrive sorted by z, so the map is two planes of flat arrays (the cells' lower and upper node
 *   planes, stamped with their z so nothing needs clearing) when a plane has at most
 *   `PLANE_INDEX_LIMIT` nodes, and a hash map beyond that.
 * - Vertices are placed by linear interpolation; the parameter is kept within [ε, 1 − ε] of the edge
 *   (ε = `EDGE_MARGIN`) so that a sample exactly at the level never puts two vertices on one corner.
 *   Three distinct points in the relative interiors of cube edges are never collinear (a line meets a
 *   convex body's boundary in at most two points unless it lies in a face, and inside a face it meets
 *   the edges at two points), so no triangle has zero area.
 * - Polygons come from the plan table of cell-plan.ts (shared with the dense-grid driver) and are
 *   triangulated by `MeshBuilder.addFan` (fans that keep diagonals off the cell faces).
 * - Optional lattice normals (`normals: true`): the gradient of the sampled values, with no new
 *   evaluation (after the original method's normals, differences of the lattice values interpolated
 *   along the edge; Lorensen and Cline 1987). Each cell that uses an edge's vertex adds the gradient of
 *   its trilinear interpolant there; the four cells around a sign-changing edge are all surface cells,
 *   so across the edge the sum is the lattice's central difference interpolated to the vertex, and along
 *   it the edge's own difference (the gradient at the edge's middle: first-order accurate, within κh/2
 *   on a surface of curvature κ; exact for a linear field). A centroid vertex takes its cell's gradient
 *   at its position. The bake uses them to guide decimation of costly fields (bake-field.ts).
 */
import type { MeshData } from '../types.js';
import type { SurfaceCells } from '../sampling/sample-octree.js';
import { KeyMap } from '../sampling/key-map.js';
import { MeshBuilder } from './mesh-builder.js';
import { EDGE_AXIS, edgeCrossing } from './cell-loops.js';
import { cellPlanAt, cellPlanKey, EDGE_C0, EDGE_C1, EDGE_UPPER, PLAN } from './cell-plan.js';

export { EDGE_MARGIN } from './cell-loops.js';

/** Largest node plane ((nx+1)·(ny+1)) indexed by flat arrays: 2^21 nodes is 48 MB for both planes, depth 10 on a cube. */
export const PLANE_INDEX_LIMIT = 2 ** 21;

/** Options for {@link marchingCubes}. */
export interface MarchingCubesOptions {
  /** Also return unit vertex normals from the lattice's own values (see the file comment). Default: false. */
  normals?: boolean;
}

/**
 * Triangulates the surface cells. Returns positions (3 floats per vertex, metres) and indices
 * (3 per triangle), counter-clockwise seen from outside.
 *
 * @example
 * const mesh = marchingCubes(await sampleOctree(field, { depth: 7 }));
 */
export function marchingCubes(cells: SurfaceCells, options: MarchingCubesOptions = {}): MeshData {
  const { lattice, count, coords, corners } = cells;
  const [nx, ny] = lattice.cells;
  const h = lattice.cellSize;
  const [ox, oy, oz] = lattice.origin;
  const planeN = (nx + 1) * (ny + 1);
  const usePlanes = planeN <= PLANE_INDEX_LIMIT;
  const edgeVertex = usePlanes ? null : new KeyMap(count * 2);
  // Planes of vertex ids (slot·3 + axis) and the z each slot was written for (+1; 0 = never).
  let ids0 = usePlanes ? new Int32Array(planeN * 3) : null;
  let ids1 = usePlanes ? new Int32Array(planeN * 3) : null;
  let st0 = usePlanes ? new Int32Array(planeN * 3) : null;
  let st1 = usePlanes ? new Int32Array(planeN * 3) : null;
  let planeZ = -1;
  const out = new MeshBuilder(count * 2);
  const v = new Float64Array(8);
  const loopIds = new Int32Array(16);
  const withNormals = !!options.normals;
  // Summed gradients, 3 per vertex (grown with the vertices).
  let grad = new Float64Array(withNormals ? count * 6 : 0);
  for (let c = 0; c < count; c++) {
    const i = coords[3 * c], j = coords[3 * c + 1], k = coords[3 * c + 2];
    if (usePlanes && k !== planeZ) {
      // Moving up one: the old upper plane becomes the lower one. Otherwise no slot matches anyway,
      // since every stamp names the z it was written for.
      if (k === planeZ + 1) {
        [ids0, ids1] = [ids1, ids0];
        [st0, st1] = [st1, st0];
      }
      planeZ = k;
    }
    let mask = 0;
    for (let q = 0; q < 8; q++) {
      v[q] = corners[8 * c + q];
      if (v[q] < 0) mask |= 1 << q;
    }
    // The cell's loops, each with its allowed fans, from the plan table shared with the dense-grid driver.
    let at = cellPlanAt(cellPlanKey(mask, v));
    for (let loops = PLAN[at++]; loops > 0; loops--) {
      const n = PLAN[at++];
      const starts = PLAN[at++];
      for (let m = 0; m < n; m++) {
        const e = PLAN[at++];
        const c0 = EDGE_C0[e];
        const a = EDGE_AXIS[e];
        const i0 = i + (c0 & 1), j0 = j + ((c0 >> 1) & 1), k0 = k + EDGE_UPPER[e];
        // The edge's vertex: from the two stamped planes, or the hash map for very wide lattices; made once.
        let id = -1, slot = 0, key = 0;
        const ids = k0 === k ? ids0 : ids1, st = k0 === k ? st0 : st1;
        if (st && ids) {
          slot = 3 * (i0 + (nx + 1) * j0) + a;
          if (st[slot] === k0 + 1) id = ids[slot];
        } else {
          key = 3 * (i0 + (nx + 1) * (j0 + (ny + 1) * k0)) + a;
          const got = edgeVertex!.get(key);
          if (!Number.isNaN(got)) id = got;
        }
        if (id < 0) {
          const t = edgeCrossing(v[c0], v[EDGE_C1[e]]);
          id = out.addVertex(ox + h * (i0 + (a === 0 ? t : 0)), oy + h * (j0 + (a === 1 ? t : 0)), oz + h * (k0 + (a === 2 ? t : 0)));
          if (st && ids) {
            ids[slot] = id;
            st[slot] = k0 + 1;
          } else edgeVertex!.set(key, id);
        }
        loopIds[m] = id;
        if (withNormals) {
          if (3 * id + 3 > grad.length) grad = growFloat64(grad, 3 * id + 3);
          const t = edgeCrossing(v[c0], v[EDGE_C1[e]]);
          addTrilinearGradient(v, a === 0 ? t : c0 & 1, a === 1 ? t : (c0 >> 1) & 1, a === 2 ? t : (c0 >> 2) & 1, grad, 3 * id);
        }
      }
      const before = out.vertexCount;
      if (n === 3) out.addTriangle(loopIds[0], loopIds[1], loopIds[2]);
      else out.addFan(starts, loopIds, n);
      if (withNormals && out.vertexCount > before) {
        // A centroid vertex inside this cell: its gradient there.
        const id = out.vertexCount - 1;
        if (3 * id + 3 > grad.length) grad = growFloat64(grad, 3 * id + 3);
        const p = out.pos;
        addTrilinearGradient(v, (p[3 * id] - ox) / h - i, (p[3 * id + 1] - oy) / h - j, (p[3 * id + 2] - oz) / h - k, grad, 3 * id);
      }
    }
  }
  const mesh = out.toMesh();
  if (withNormals) {
    const V = out.vertexCount;
    const normals = new Float32Array(3 * V);
    for (let q = 0; q < 3 * V; q += 3) {
      const gx = grad[q], gy = grad[q + 1], gz = grad[q + 2];
      // Never zero: along its edge a vertex's gradient is the difference of two values of opposite sign.
      const len = Math.sqrt(gx * gx + gy * gy + gz * gz);
      normals[q] = gx / len;
      normals[q + 1] = gy / len;
      normals[q + 2] = gz / len;
    }
    mesh.normals = normals;
  }
  return mesh;
}

/**
 * Adds to out[o..o+2] the gradient (per cell, signed values growing outward) of the trilinear interpolant
 * of corner values `v` (corner c at (c&1, c>>1&1, c>>2&1)) at local coordinates (x, y, z) in [0, 1]³.
 */
function addTrilinearGradient(v: Float64Array, x: number, y: number, z: number, out: Float64Array, o: number): void {
  const x1 = 1 - x, y1 = 1 - y, z1 = 1 - z;
  out[o] += y1 * z1 * (v[1] - v[0]) + y * z1 * (v[3] - v[2]) + y1 * z * (v[5] - v[4]) + y * z * (v[7] - v[6]);
  out[o + 1] += x1 * z1 * (v[2] - v[0]) + x * z1 * (v[3] - v[1]) + x1 * z * (v[6] - v[4]) + x * z * (v[7] - v[5]);
  out[o + 2] += x1 * y1 * (v[4] - v[0]) + x * y1 * (v[5] - v[1]) + x1 * y * (v[6] - v[2]) + x * y * (v[7] - v[3]);
}

function growFloat64(a: Float64Array<ArrayBuffer>, need: number): Float64Array<ArrayBuffer> {
  const next = new Float64Array(Math.max(need, 2 * a.length));
  next.set(a);
  return next;
}
