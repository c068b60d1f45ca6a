/**
 * The undirected edges of an indexed triangle mesh with how often each is used in each direction.
 * Shared by the edge predicates so a mesh is scanned once.
 *
 * Built by bucketing the half-edges by their smaller end (a counting sort over the vertices), then
 * sorting each bucket, a handful of half-edges, by the larger end. The edges come out ordered by
 * (a, b). Measured on a 0.9M-triangle marching-cubes torus (node 20, best of 4, CPU time): 74 ms, against
 * 277 ms for the first version, which sorted one float64 key per half-edge (edge key × 2 + direction)
 * with the native typed-array sort. Same table, a little less scratch memory (about 19 bytes per
 * triangle against 24).
 */

export interface EdgeTable {
  /** Endpoints of each undirected edge, 2 per edge, a < b (a = b for a triangle's repeated index). */
  ends: Uint32Array;
  /** Uses of the edge as a → b (a < b) and as b → a. */
  forward: Uint32Array;
  backward: Uint32Array;
  count: number;
}

/** Builds the edge table of `indices` (3 per triangle) over `vertexCount` vertices. */
export function buildEdgeTable(indices: Uint32Array, vertexCount: number): EdgeTable {
  const n = indices.length;
  // Half-edge h runs from indices[h] to the next corner of its triangle.
  const start = new Uint32Array(vertexCount + 1);
  for (let t = 0; t < n; t += 3) {
    const a = indices[t], b = indices[t + 1], c = indices[t + 2];
    start[(a < b ? a : b) + 1]++;
    start[(b < c ? b : c) + 1]++;
    start[(c < a ? c : a) + 1]++;
  }
  for (let v = 0; v < vertexCount; v++) start[v + 1] += start[v];
  // Per half-edge in its bucket: the larger end, and 1 when it runs from the larger end to the smaller.
  const other = new Uint32Array(n);
  const back = new Uint8Array(n);
  const fill = start.slice(0, vertexCount);
  for (let t = 0; t < n; t += 3) {
    for (let e = 0; e < 3; e++) {
      const a = indices[t + e];
      const b = indices[t + (e === 2 ? 0 : e + 1)];
      // A repeated index (a = b) counts as running backward, as the key version had it.
      const q = fill[a < b ? a : b]++;
      other[q] = a < b ? b : a;
      back[q] = a < b ? 0 : 1;
    }
  }
  // Sort each bucket by the larger end (insertion sort: buckets hold about six) and count the edges.
  let count = 0;
  for (let v = 0; v < vertexCount; v++) {
    const s = start[v], e = start[v + 1];
    for (let i = s + 1; i < e; i++) {
      const o = other[i], d = back[i];
      let j = i - 1;
      while (j >= s && other[j] > o) {
        other[j + 1] = other[j];
        back[j + 1] = back[j];
        j--;
      }
      other[j + 1] = o;
      back[j + 1] = d;
    }
    for (let i = s; i < e; i++) if (i === s || other[i] !== other[i - 1]) count++;
  }
  const ends = new Uint32Array(2 * count);
  const forward = new Uint32Array(count);
  const backward = new Uint32Array(count);
  let k = -1;
  for (let v = 0; v < vertexCount; v++) {
    const s = start[v], e = start[v + 1];
    for (let i = s; i < e; i++) {
      if (i === s || other[i] !== other[i - 1]) {
        k++;
        ends[2 * k] = v;
        ends[2 * k + 1] = other[i];
      }
      if (back[i]) backward[k]++;
      else forward[k]++;
    }
  }
  return { ends, forward, backward, count };
}
