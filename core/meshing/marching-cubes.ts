/**
 * Marching cubes over the sparse surface cells found by the octree sampler (Lorensen and Cline 1987,
 * "Marching cubes: a high resolution 3D surface construction algorithm"), with each cell's polygons
 * found by walking its faces and face ambiguities resolved by the asymptotic decider (see
 * `cell-loops.ts`). The result is topologically consistent between neighbouring cells: for a surface
 * closed inside the lattice it is watertight, edge- and vertex-manifold and wound outward.
 *
 * - One vertex per sign-changing lattice edge, created once and shared (an edge map, as in libigl's
 *   marching cubes), so the mesh is indexed by construction: no welding by float comparison.
 * - Vertices are placed by linear interpolation; the parameter is kept within [ε, 1 − ε] of the edge
 *   (ε = `EDGE_MARGIN`) so that a sample exactly at the level never puts two vertices on one corner.
 *   Three distinct points in the relative interiors of cube edges are never collinear (a line meets a
 *   convex body's boundary in at most two points unless it lies in a face, and inside a face it meets
 *   the edges at two points), so no triangle has zero area.
 * - Each polygon is fanned from the vertex that maximizes the smallest triangle area, among the fans
 *   whose diagonals leave the cell's faces. A diagonal joining two vertices of one face (possible on a
 *   face with four crossings) would lie in that face, and the neighbour cell could pick the same one:
 *   the edge would then carry four triangles. When every fan has such a diagonal, the polygon is fanned
 *   around its centroid instead, a new vertex strictly inside the cell.
 */
import type { MeshData } from '../types.js';
import type { SurfaceCells } from '../sampling/sample-octree.js';
import { KeyMap } from '../sampling/key-map.js';
import { cellLoops, EDGE_AXIS, EDGE_CORNERS, FACE_UV_CORNERS, insideJoined, isAmbiguousFace } from './cell-loops.js';

/** Fraction of an edge's length that a vertex keeps from either end. */
export const EDGE_MARGIN = 1e-3;

/**
 * Triangulates the surface cells. Returns positions (3 floats per vertex, metres) and indices
 * (3 per triangle), counter-clockwise seen from outside.
 *
 * @example
 * const mesh = marchingCubes(await sampleOctree(field, { depth: 7 }));
 */
export function marchingCubes(cells: SurfaceCells): MeshData {
  const { lattice, count, coords, corners } = cells;
  const [nx, ny] = lattice.cells;
  const h = lattice.cellSize;
  const [ox, oy, oz] = lattice.origin;
  const edgeVertex = new KeyMap(count * 2);
  const pos: number[] = [];
  const tri: number[] = [];
  const v = new Float64Array(8);
  const loopIds: number[] = [];
  for (let c = 0; c < count; c++) {
    const i = coords[3 * c], j = coords[3 * c + 1], k = coords[3 * c + 2];
    let mask = 0;
    for (let q = 0; q < 8; q++) {
      v[q] = corners[8 * c + q];
      if (v[q] < 0) mask |= 1 << q;
    }
    let faceBits = 0;
    for (let f = 0; f < 6; f++) {
      const fc = FACE_UV_CORNERS[f];
      if (!isAmbiguousFace(v[fc[0]] < 0, v[fc[1]] < 0, v[fc[2]] < 0, v[fc[3]] < 0)) continue;
      if (insideJoined(v[fc[0]], v[fc[1]], v[fc[2]], v[fc[3]])) faceBits |= 1 << f;
    }
    for (const loop of cellLoops(mask, faceBits)) {
      loopIds.length = 0;
      for (const e of loop) {
        const [c0, c1] = EDGE_CORNERS[e];
        const a = EDGE_AXIS[e];
        const i0 = i + (c0 & 1), j0 = j + ((c0 >> 1) & 1), k0 = k + ((c0 >> 2) & 1);
        const key = 3 * (i0 + (nx + 1) * (j0 + (ny + 1) * k0)) + a;
        let id = edgeVertex.get(key);
        if (Number.isNaN(id)) {
          const s0 = v[c0], s1 = v[c1];
          let t = s0 / (s0 - s1);
          if (!(t >= EDGE_MARGIN)) t = EDGE_MARGIN;
          else if (t > 1 - EDGE_MARGIN) t = 1 - EDGE_MARGIN;
          id = pos.length / 3;
          pos.push(
            ox + h * (i0 + (a === 0 ? t : 0)),
            oy + h * (j0 + (a === 1 ? t : 0)),
            oz + h * (k0 + (a === 2 ? t : 0)),
          );
          edgeVertex.set(key, id);
        }
        loopIds.push(id);
      }
      fanTriangulate(loop, loopIds, pos, tri);
    }
  }
  return { positions: new Float32Array(pos), indices: new Uint32Array(tri) };
}

/** Bit mask of the two faces that contain edge `e` (face 2a + side, see cell-loops.ts). */
const EDGE_FACES: readonly number[] = Array.from({ length: 12 }, (_, e) => {
  const a = e >> 2;
  const u = (a + 1) % 3;
  const v = (a + 2) % 3;
  return (1 << (2 * u + (e & 1))) | (1 << (2 * v + ((e >> 1) & 1)));
});

/**
 * Fans polygon `ids` (on cell edges `edges`) from the vertex whose fan has the largest smallest
 * triangle (twice the area, squared), skipping fans with a diagonal inside a cell face.
 */
function fanTriangulate(edges: readonly number[], ids: number[], pos: number[], out: number[]): void {
  const n = ids.length;
  if (n === 3) {
    out.push(ids[0], ids[1], ids[2]);
    return;
  }
  let best = -1;
  let bestScore = -1;
  for (let s = 0; s < n; s++) {
    let inFace = false;
    for (let t = 2; t < n - 1; t++) if (EDGE_FACES[edges[s]] & EDGE_FACES[edges[(s + t) % n]]) inFace = true;
    if (inFace) continue;
    let worst = Infinity;
    for (let t = 1; t < n - 1; t++) {
      const a2 = area2sq(pos, ids[s], ids[(s + t) % n], ids[(s + t + 1) % n]);
      if (a2 < worst) worst = a2;
    }
    if (worst > bestScore) {
      bestScore = worst;
      best = s;
    }
  }
  if (best >= 0) {
    for (let t = 1; t < n - 1; t++) out.push(ids[best], ids[(best + t) % n], ids[(best + t + 1) % n]);
    return;
  }
  const c = pos.length / 3;
  let cx = 0, cy = 0, cz = 0;
  for (const id of ids) {
    cx += pos[3 * id];
    cy += pos[3 * id + 1];
    cz += pos[3 * id + 2];
  }
  pos.push(cx / n, cy / n, cz / n);
  for (let t = 0; t < n; t++) out.push(c, ids[t], ids[(t + 1) % n]);
}

function area2sq(p: number[], a: number, b: number, c: number): number {
  const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
  const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
  const x = uy * vz - uz * vy, y = uz * vx - ux * vz, z = ux * vy - uy * vx;
  return x * x + y * y + z * z;
}
