/**
 * Removes zero-area triangles without opening the mesh. A degenerate triangle with three distinct
 * corners is one of two shapes:
 *
 * - a needle: two corners at the same place. Its shortest edge is collapsed (the second corner is
 *   merged into the first), which removes the needle and its neighbour across that edge and moves
 *   nothing. The collapse is made only when it keeps the mesh manifold: the link condition (the
 *   vertices adjacent to both ends are exactly the two opposite corners of the edge's triangles;
 *   Dey, Edelsbrunner, Guha and Nekhayev 1999, "Topology preserving edge contraction"), and no
 *   remaining triangle around the merged corner turns over.
 * - a cap: one corner lies on the opposite (longest) edge. That edge is flipped: the cap and its
 *   neighbour across the edge become two triangles that tile the neighbour exactly, so the
 *   surface does not move. The flip is made only when the new edge does not exist yet.
 *
 * When a cap cannot be flipped its shortest edge is collapsed instead (under the same conditions),
 * which moves one corner by that edge's length. A triangle that repeats a vertex index covers
 * nothing and uses its one real edge once in each direction, so it is dropped. Every change keeps
 * each edge's uses balanced, so a closed, manifold mesh stays closed and manifold. Triangles that
 * none of this can fix are left in place and counted.
 */
import type { MeshData } from '../types.js';
import { triangleArea } from '../checks/find-degenerate-triangles.js';
import { compactMesh } from './compact-mesh.js';

/** Options for {@link removeDegenerateTriangles}. */
export interface RemoveDegenerateOptions {
  /** Triangles with area at or below this are degenerate, m². Default: 0 (exactly zero area), as the check uses. */
  minArea?: number;
  /** Passes over the remaining degenerate triangles (a fix can expose another). Default: 8. */
  maxPasses?: number;
}

/** Defaults of {@link removeDegenerateTriangles}. */
export const REMOVE_DEGENERATE_DEFAULTS: Required<RemoveDegenerateOptions> = { minArea: 0, maxPasses: 8 };

/** What {@link removeDegenerateTriangles} did. */
export interface DegenerateTrianglesRemoved {
  /** Degenerate triangles found at the start. */
  found: number;
  /** Edges collapsed. */
  collapsed: number;
  /** Edges flipped. */
  flipped: number;
  /** Triangles with a repeated vertex index dropped. */
  dropped: number;
  /** Degenerate triangles left (could not be fixed without breaking the mesh). */
  remaining: number;
}

/**
 * The mesh without degenerate triangles, where that is possible without opening it (see the file
 * comment). Normals and colors are carried along; unused vertices are dropped.
 * @example
 * const { mesh: clean, removed } = removeDegenerateTriangles(mesh);
 */
export function removeDegenerateTriangles(mesh: MeshData, options: RemoveDegenerateOptions = {}): { mesh: MeshData; removed: DegenerateTrianglesRemoved } {
  const { minArea, maxPasses } = { ...REMOVE_DEGENERATE_DEFAULTS, ...options };
  const P = mesh.positions;
  const tris = Int32Array.from(mesh.indices);
  const T = tris.length / 3;
  const isDegenerate = (t: number): boolean => {
    const a = tris[3 * t], b = tris[3 * t + 1], c = tris[3 * t + 2];
    return a === b || b === c || a === c || triangleArea(P, a, b, c) <= minArea;
  };
  const removed: DegenerateTrianglesRemoved = { found: 0, collapsed: 0, flipped: 0, dropped: 0, remaining: 0 };
  let list: number[] = [];
  for (let t = 0; t < T; t++) if (isDegenerate(t)) list.push(t);
  removed.found = list.length;
  if (list.length === 0) return { mesh, removed };

  const alive = new Uint8Array(T).fill(1);
  const vertTris: Set<number>[] = Array.from({ length: P.length / 3 }, () => new Set<number>());
  for (let t = 0; t < T; t++) for (let k = 0; k < 3; k++) vertTris[tris[3 * t + k]].add(t);

  const neighbours = (v: number): Set<number> => {
    const s = new Set<number>();
    for (const t of vertTris[v]) for (let k = 0; k < 3; k++) if (tris[3 * t + k] !== v) s.add(tris[3 * t + k]);
    return s;
  };
  const kill = (t: number) => {
    alive[t] = 0;
    for (let k = 0; k < 3; k++) vertTris[tris[3 * t + k]].delete(t);
  };

  /** Merges vertex `v` into `u` when that keeps the mesh manifold and turns no triangle over. */
  const tryCollapse = (u: number, v: number): boolean => {
    const shared = [...vertTris[u]].filter((t) => vertTris[v].has(t));
    if (shared.length !== 2) return false;
    const opposite = new Set(shared.map((t) => [0, 1, 2].map((k) => tris[3 * t + k]).find((x) => x !== u && x !== v)!));
    const nu = neighbours(u);
    let common = 0;
    for (const x of neighbours(v)) {
      if (x === u) continue;
      if (nu.has(x)) {
        if (!opposite.has(x)) return false;
        common++;
      }
    }
    if (common !== opposite.size) return false;
    for (const t of vertTris[v]) {
      if (shared.includes(t)) continue;
      const before = normalOf(P, tris[3 * t], tris[3 * t + 1], tris[3 * t + 2]);
      const ids = [0, 1, 2].map((k) => (tris[3 * t + k] === v ? u : tris[3 * t + k]));
      const after = normalOf(P, ids[0], ids[1], ids[2]);
      const dot = before[0] * after[0] + before[1] * after[1] + before[2] * after[2];
      if (dot < 0) return false;
    }
    for (const t of shared) kill(t);
    for (const t of [...vertTris[v]]) {
      for (let k = 0; k < 3; k++) if (tris[3 * t + k] === v) tris[3 * t + k] = u;
      vertTris[u].add(t);
    }
    vertTris[v].clear();
    removed.collapsed++;
    return true;
  };

  /** Flips edge p→q of triangle t (corner w opposite) with the triangle across it. */
  const tryFlip = (t: number, p: number, q: number, w: number): boolean => {
    const across = [...vertTris[p]].filter((s) => s !== t && vertTris[q].has(s));
    if (across.length !== 1) return false;
    const t2 = across[0];
    const ids = [tris[3 * t2], tris[3 * t2 + 1], tris[3 * t2 + 2]];
    const iq = ids.indexOf(q);
    if (ids[(iq + 1) % 3] !== p) return false; // t2 must run q → p
    const d = ids[(iq + 2) % 3];
    if (d === w || neighbours(w).has(d)) return false;
    vertTris[q].delete(t);
    vertTris[p].delete(t2);
    tris[3 * t] = w;
    tris[3 * t + 1] = p;
    tris[3 * t + 2] = d;
    tris[3 * t2] = w;
    tris[3 * t2 + 1] = d;
    tris[3 * t2 + 2] = q;
    vertTris[d].add(t);
    vertTris[w].add(t2);
    removed.flipped++;
    return true;
  };

  for (let pass = 0; pass < maxPasses && list.length > 0; pass++) {
    let progress = false;
    for (const t of list) {
      if (!alive[t] || !isDegenerate(t)) continue;
      const c = [tris[3 * t], tris[3 * t + 1], tris[3 * t + 2]];
      if (c[0] === c[1] || c[1] === c[2] || c[0] === c[2]) {
        kill(t);
        removed.dropped++;
        progress = true;
        continue;
      }
      // Edge k runs c[k] → c[k+1]; its opposite corner is c[k+2].
      const len = [0, 1, 2].map((k) => dist2(P, c[k], c[(k + 1) % 3]));
      const shortest = len.indexOf(Math.min(...len));
      const longest = len.indexOf(Math.max(...len));
      const su = c[shortest], sv = c[(shortest + 1) % 3];
      const done =
        len[shortest] === 0
          ? tryCollapse(su, sv) || tryFlip(t, c[longest], c[(longest + 1) % 3], c[(longest + 2) % 3])
          : tryFlip(t, c[longest], c[(longest + 1) % 3], c[(longest + 2) % 3]) || tryCollapse(su, sv);
      if (done) progress = true;
    }
    list = [];
    for (let t = 0; t < T; t++) if (alive[t] && isDegenerate(t)) list.push(t);
    if (!progress) break;
  }
  removed.remaining = list.length;
  const out: number[] = [];
  for (let t = 0; t < T; t++) if (alive[t]) out.push(tris[3 * t], tris[3 * t + 1], tris[3 * t + 2]);
  return { mesh: compactMesh(mesh, Uint32Array.from(out)).mesh, removed };
}

function dist2(p: Float32Array, a: number, b: number): number {
  const x = p[3 * a] - p[3 * b], y = p[3 * a + 1] - p[3 * b + 1], z = p[3 * a + 2] - p[3 * b + 2];
  return x * x + y * y + z * z;
}

function normalOf(p: Float32Array, a: number, b: number, c: number): [number, number, number] {
  const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
  const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
  return [uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx];
}
