/**
 * Connected components of a triangle mesh (triangles joined through shared vertices).
 * Returns each triangle's component id (0..count-1, numbered by first triangle) and the count.
 */
export function findComponents(indices: Uint32Array, vertexCount: number): { triComponent: Uint32Array; count: number } {
  const parent = new Int32Array(vertexCount);
  for (let i = 0; i < vertexCount; i++) parent[i] = i;
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]];
      x = parent[x];
    }
    return x;
  };
  for (let t = 0; t < indices.length; t += 3) {
    const a = find(indices[t]);
    const b = find(indices[t + 1]);
    const c = find(indices[t + 2]);
    if (a !== b) parent[a] = b;
    const bb = find(b);
    if (c !== bb) parent[c] = bb;
  }
  const label = new Int32Array(vertexCount).fill(-1);
  const triComponent = new Uint32Array(indices.length / 3);
  let count = 0;
  for (let t = 0; t < indices.length; t += 3) {
    const r = find(indices[t]);
    if (label[r] < 0) label[r] = count++;
    triComponent[t / 3] = label[r];
  }
  return { triComponent, count };
}
