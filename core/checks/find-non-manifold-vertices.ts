/**
 * Non-manifold vertices: vertices whose incident triangles do not form one fan (a disk, or a half
 * disk on a boundary), e.g. the tip where two cones touch (a "bow-tie"). Found by counting the
 * connected pieces of each vertex's link graph (the edges opposite the vertex in its triangles).
 * Returns the vertex indices.
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
  const parent = new Map<number, number>();
  const find = (x: number): number => {
    let r = x;
    while (parent.get(r)! !== r) r = parent.get(r)!;
    while (parent.get(x)! !== r) {
      const n = parent.get(x)!;
      parent.set(x, r);
      x = n;
    }
    return r;
  };
  for (let v = 0; v < vertexCount; v++) {
    const s = start[v];
    const e = start[v + 1];
    if (e - s <= 1) continue;
    parent.clear();
    let pieces = 0;
    for (let q = s; q < e; q++) {
      const t = incident[q];
      const ids = [indices[3 * t], indices[3 * t + 1], indices[3 * t + 2]].filter((x) => x !== v);
      if (ids.length !== 2) continue; // degenerate triangle using v twice: reported by the degenerate check
      for (const x of ids) {
        if (!parent.has(x)) {
          parent.set(x, x);
          pieces++;
        }
      }
      const ra = find(ids[0]);
      const rb = find(ids[1]);
      if (ra !== rb) {
        parent.set(ra, rb);
        pieces--;
      }
    }
    if (pieces > 1) out.push(v);
  }
  return out;
}
