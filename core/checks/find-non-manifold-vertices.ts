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
    const slot = (x: number): number => {
      for (let q = 0; q < n; q++) if (ids[q] === x) return q;
      ids[n] = x;
      parent[n] = n;
      pieces++;
      return n++;
    };
    const find = (q: number): number => {
      while (parent[q] !== q) q = parent[q] = parent[parent[q]];
      return q;
    };
    for (let q = s; q < e; q++) {
      const t = 3 * incident[q];
      const a = indices[t], b = indices[t + 1], c = indices[t + 2];
      let x: number, y: number;
      if (a === v) [x, y] = [b, c];
      else if (b === v) [x, y] = [c, a];
      else [x, y] = [a, b];
      if (x === v || y === v || x === y) continue; // degenerate triangle: reported by the degenerate check
      const rx = find(slot(x));
      const ry = find(slot(y));
      if (rx !== ry) {
        parent[rx] = ry;
        pieces--;
      }
    }
    if (pieces > 1) out.push(v);
  }
  return out;
}
