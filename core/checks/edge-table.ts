/**
 * The undirected edges of an indexed triangle mesh with how often each is used in each direction.
 * Shared by the edge predicates so a mesh is scanned once. Built by sorting one float64 key per
 * half-edge (edge key × 2 + direction), which beat a hash map here (typed-array sort is native).
 */

export interface EdgeTable {
  /** Endpoints of each undirected edge, 2 per edge, a < b. */
  ends: Uint32Array;
  /** Uses of the edge as a → b (a < b) and as b → a. */
  forward: Uint32Array;
  backward: Uint32Array;
  count: number;
}

/** Builds the edge table of `indices` (3 per triangle) over `vertexCount` vertices. */
export function buildEdgeTable(indices: Uint32Array, vertexCount: number): EdgeTable {
  const n = indices.length;
  const keys = new Float64Array(n);
  for (let t = 0; t < n; t += 3) {
    for (let e = 0; e < 3; e++) {
      const a = indices[t + e];
      const b = indices[t + (e === 2 ? 0 : e + 1)];
      keys[t + e] = a < b ? (a * vertexCount + b) * 2 : (b * vertexCount + a) * 2 + 1;
    }
  }
  keys.sort();
  let count = 0;
  for (let i = 0; i < n; i++) if (i === 0 || Math.floor(keys[i] / 2) !== Math.floor(keys[i - 1] / 2)) count++;
  const ends = new Uint32Array(2 * count);
  const forward = new Uint32Array(count);
  const backward = new Uint32Array(count);
  let e = -1;
  let prev = -1;
  for (let i = 0; i < n; i++) {
    const k = keys[i];
    const und = Math.floor(k / 2);
    if (und !== prev) {
      e++;
      prev = und;
      ends[2 * e] = Math.floor(und / vertexCount);
      ends[2 * e + 1] = und % vertexCount;
    }
    if (k % 2 === 0) forward[e]++;
    else backward[e]++;
  }
  return { ends, forward, backward, count };
}
