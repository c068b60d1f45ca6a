/**
 * Non-manifold vertices: vertices whose incident triangles do not form one fan (a disk, or a half
 * disk on a boundary), e.g. the tip where two cones touch (a "bow-tie"). Found by counting the
 * connected pieces of each vertex's link graph (the edges opposite the vertex in its triangles) with a
 * small union-find over the link's vertices. Returns the vertex indices.
 */
export function findNonManifoldVertices(indices: Uint32Array, vertexCount: number): number[] {
  const triCount = indices.length / 3;
  const start = new Uint32Array(vertexCount + 1);
  for (let i = 0; i < indices.length; i++) start[indices[i] + 1]++;
  for (let v = 0; v < vertexCount; v++) start[v + 1] += start[v];
  const fill = start.slice(0, vertexCount);
  const incident = new Uint32Array(indices.length);
  for (let t = 0; t < triCount; t++) for (let e = 0; e < 3; e++) incident[fill[indices[3 * t + e]]++] = t;
  const out: number[] = [];
  let ids = new Int32Array(64);
  let parent = new Int32Array(64);
  for (let v = 0; v < vertexCount; v++) {
    const s = start[v];
    const e = start[v + 1];
    if (e - s <= 1) continue;
    if (2 * (e - s) > ids.length) {
      ids = new Int32Array(4 * (e - s));
      parent = new Int32Array(4 * (e - s));
    }
    let n = 0;
    let pieces = 0;
    for (let q = s; q < e; q++) {
      const t = 3 * incident[q];
      const a = indices[t], b = indices[t + 1], c = indices[t + 2];
      const x = a === v ? b : b === v ? c : a;
      const y = a === v ? c : b === v ? a : b;
      if (x === v || y === v || x === y) continue; // degenerate triangle: reported by the degenerate check
      // The link vertices' slots (a short linear search: a vertex has about six neighbours), then their roots.
      let sx = 0;
      while (sx < n && ids[sx] !== x) sx++;
      if (sx === n) {
        ids[n] = x;
        parent[n] = n;
        n++;
        pieces++;
      }
      let sy = 0;
      while (sy < n && ids[sy] !== y) sy++;
      if (sy === n) {
        ids[n] = y;
        parent[n] = n;
        n++;
        pieces++;
      }
      while (parent[sx] !== sx) sx = parent[sx] = parent[parent[sx]];
      while (parent[sy] !== sy) sy = parent[sy] = parent[parent[sy]];
      if (sx !== sy) {
        parent[sx] = sy;
        pieces--;
      }
    }
    if (pieces > 1) out.push(v);
  }
  return out;
}
