/**
 * The surface loops of one lattice cell, found by walking its six faces (table-free marching cubes).
 *
 * Each face contributes one segment per pair of sign-changing edges. A face with four crossings is
 * ambiguous; it is resolved by the asymptotic decider (Nielson and Hamann 1991, "The asymptotic
 * decider: resolving the ambiguity in marching cubes"): the inside corners are joined across the face
 * when the bilinear interpolant's saddle value is inside. Both cells that share a face compute the same
 * decision from the same four values in the same order, so their segments match and the mesh closes.
 * Interior (tunnel) ambiguity is not resolved: every loop becomes its own polygon, which keeps the
 * result a closed 2-manifold at the cost of sometimes choosing the simpler of two valid topologies.
 *
 * Orientation: walking a face counter-clockwise as seen from outside the cube, a segment runs from the
 * edge where the walk enters the inside to the edge where it leaves. Chained across faces, the loops
 * then wind counter-clockwise seen from the outside of the surface (normals point from inside to
 * outside), and neighbouring cells traverse each shared segment in opposite directions.
 *
 * Conventions: corner c sits at (c & 1, c >> 1 & 1, c >> 2 & 1). Edge 4a + pu + 2pv runs along axis a,
 * with pu, pv the coordinates along u = (a+1) % 3 and v = (a+2) % 3. Face 2a + side has outward normal
 * ±a. The face bits give, for each ambiguous face, whether its inside corners are joined.
 */

/** Corner index of the point with coordinate `ca` on axis a, `cu` on u, `cv` on v. */
function cornerOf(a: number, ca: number, cu: number, cv: number): number {
  const u = (a + 1) % 3;
  const v = (a + 2) % 3;
  return (ca << a) | (cu << u) | (cv << v);
}

/** The two corners of edge `e`: [lower, upper] along its axis. */
export const EDGE_CORNERS: readonly (readonly [number, number])[] = Array.from({ length: 12 }, (_, e) => {
  const a = e >> 2;
  const pu = e & 1;
  const pv = (e >> 1) & 1;
  return [cornerOf(a, 0, pu, pv), cornerOf(a, 1, pu, pv)] as const;
});

/** Axis of edge `e`. */
export const EDGE_AXIS: readonly number[] = Array.from({ length: 12 }, (_, e) => e >> 2);

function edgeBetween(c0: number, c1: number): number {
  const diff = c0 ^ c1;
  const a = diff === 1 ? 0 : diff === 2 ? 1 : 2;
  const lo = c0 & c1;
  const u = (a + 1) % 3;
  const v = (a + 2) % 3;
  return 4 * a + ((lo >> u) & 1) + 2 * ((lo >> v) & 1);
}

/** Face corners counter-clockwise seen from outside, and the edge from corner i to corner i+1. */
export const FACE_CORNERS: readonly (readonly number[])[] = Array.from({ length: 6 }, (_, f) => {
  const a = f >> 1;
  const side = f & 1;
  const uv = side ? [[0, 0], [1, 0], [1, 1], [0, 1]] : [[0, 0], [0, 1], [1, 1], [1, 0]];
  return uv.map(([cu, cv]) => cornerOf(a, side, cu, cv));
});

const FACE_EDGES: readonly (readonly number[])[] = FACE_CORNERS.map((cs) => cs.map((c, i) => edgeBetween(c, cs[(i + 1) % 4])));

/**
 * Face corners in the canonical (u, v) order used by the decider: (0,0), (1,0), (0,1), (1,1).
 * Both cells sharing a face read its values in this same order.
 */
export const FACE_UV_CORNERS: readonly (readonly number[])[] = Array.from({ length: 6 }, (_, f) => {
  const a = f >> 1;
  const side = f & 1;
  return [cornerOf(a, side, 0, 0), cornerOf(a, side, 1, 0), cornerOf(a, side, 0, 1), cornerOf(a, side, 1, 1)];
});

/**
 * Asymptotic decider for one face: true when the face's inside corners are joined across it.
 * Values are in canonical (u, v) order; inside means negative. Only meaningful for an ambiguous face
 * (diagonal corners on the same side, the other diagonal on the other side), where the denominator is non-zero.
 */
export function insideJoined(f00: number, f10: number, f01: number, f11: number): boolean {
  const num = f00 * f11 - f10 * f01;
  const den = f00 + f11 - f10 - f01;
  return num / den < 0;
}

/** True when the face with these inside flags (canonical order) is ambiguous. */
export function isAmbiguousFace(i00: boolean, i10: boolean, i01: boolean, i11: boolean): boolean {
  return i00 === i11 && i10 === i01 && i00 !== i10;
}

const cache: (readonly (readonly number[])[] | undefined)[] = new Array(1 << 14);

/**
 * Loops of edge ids for a cell with inside-corner `mask` (bit c set when corner c is inside) and
 * `faceBits` (bit f set when ambiguous face f joins its inside corners). Cached per configuration.
 */
export function cellLoops(mask: number, faceBits: number): readonly (readonly number[])[] {
  const key = mask | (faceBits << 8);
  const hit = cache[key];
  if (hit) return hit;
  const next = new Int8Array(12).fill(-1);
  for (let f = 0; f < 6; f++) {
    const cs = FACE_CORNERS[f];
    const es = FACE_EDGES[f];
    const pos: number[] = [];
    const isEntry: boolean[] = [];
    for (let i = 0; i < 4; i++) {
      const in0 = ((mask >> cs[i]) & 1) === 1;
      const in1 = ((mask >> cs[(i + 1) % 4]) & 1) === 1;
      if (in0 !== in1) {
        pos.push(i);
        isEntry.push(in1);
      }
    }
    if (pos.length === 2) {
      const [p, q] = isEntry[0] ? [0, 1] : [1, 0];
      next[es[pos[p]]] = es[pos[q]];
    } else if (pos.length === 4) {
      const joined = ((faceBits >> f) & 1) === 1;
      for (let i = 0; i < 4; i++) {
        if (!isEntry[i]) continue;
        const partner = joined ? (i + 3) % 4 : (i + 1) % 4;
        next[es[pos[i]]] = es[pos[partner]];
      }
    }
  }
  const loops: number[][] = [];
  const used = new Uint8Array(12);
  for (let e = 0; e < 12; e++) {
    if (next[e] < 0 || used[e]) continue;
    const loop: number[] = [];
    let cur = e;
    while (!used[cur]) {
      used[cur] = 1;
      loop.push(cur);
      cur = next[cur];
      if (cur < 0) throw new Error(`cellLoops: open chain for mask ${mask} faces ${faceBits}`);
    }
    loops.push(loop);
  }
  cache[key] = loops;
  return loops;
}

/** Fraction of an edge's length that a vertex keeps from either end. */
export const EDGE_MARGIN = 1e-3;

/**
 * Where the level crosses an edge with end values s0 and s1 (opposite signs): linear interpolation,
 * kept within [EDGE_MARGIN, 1 − EDGE_MARGIN] so a sample exactly at the level never puts two vertices
 * on one corner.
 */
export function edgeCrossing(s0: number, s1: number): number {
  const t = s0 / (s0 - s1);
  if (!(t >= EDGE_MARGIN)) return EDGE_MARGIN;
  return t > 1 - EDGE_MARGIN ? 1 - EDGE_MARGIN : t;
}
