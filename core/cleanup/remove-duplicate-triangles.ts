/**
 * Removes triangles that use the same three vertices as another triangle.
 *
 * - Two such triangles wound oppositely are a fold: a zero-thickness flap that the simplifier
 *   leaves where it collapsed a thin region (meshoptimizer does this on closed MC meshes, see
 *   ../shared/DEPENDENCIES.md §3). Removing both keeps every edge's use count balanced (each
 *   contributed one use in each direction), so a closed mesh stays closed; the flap's tip vertex
 *   becomes unused.
 * - Two or more wound the same way are duplicates: one copy is kept.
 *
 * In general, per set of three vertices, the surplus of one winding over the other is what is
 * kept (at most one copy); triangles keep their original order.
 */

/** What {@link removeDuplicateTriangles} removed. */
export interface DuplicateTrianglesRemoved {
  /** Opposite-wound pairs removed (2 triangles each). */
  foldedPairs: number;
  /** Extra same-wound copies removed. */
  duplicates: number;
}

/**
 * Index buffer without folds and duplicates (see the file comment).
 * @param indices 3 per triangle.
 * @example
 * const { indices, removed } = removeDuplicateTriangles(simplified);
 */
export function removeDuplicateTriangles(indices: Uint32Array): { indices: Uint32Array; removed: DuplicateTrianglesRemoved } {
  const T = indices.length / 3;
  // Sorted vertex triple and winding (+1 for an even permutation of the sorted order) per triangle.
  const key = new Uint32Array(3 * T);
  const wind = new Int8Array(T);
  for (let t = 0; t < T; t++) {
    let a = indices[3 * t], b = indices[3 * t + 1], c = indices[3 * t + 2];
    // Rotate the smallest index to the front: rotations keep the winding.
    if (b < a && b <= c) [a, b, c] = [b, c, a];
    else if (c < a && c < b) [a, b, c] = [c, a, b];
    wind[t] = b < c ? 1 : -1;
    key[3 * t] = a;
    key[3 * t + 1] = b < c ? b : c;
    key[3 * t + 2] = b < c ? c : b;
  }
  const order = new Uint32Array(T);
  for (let t = 0; t < T; t++) order[t] = t;
  order.sort((x, y) => key[3 * x] - key[3 * y] || key[3 * x + 1] - key[3 * y + 1] || key[3 * x + 2] - key[3 * y + 2] || x - y);
  const drop = new Uint8Array(T);
  const removed: DuplicateTrianglesRemoved = { foldedPairs: 0, duplicates: 0 };
  for (let s = 0; s < T; ) {
    let e = s + 1;
    const t0 = order[s];
    while (e < T && key[3 * order[e]] === key[3 * t0] && key[3 * order[e] + 1] === key[3 * t0 + 1] && key[3 * order[e] + 2] === key[3 * t0 + 2]) e++;
    if (e - s > 1) {
      let net = 0;
      for (let q = s; q < e; q++) net += wind[order[q]];
      let keptOne = net === 0;
      for (let q = s; q < e; q++) {
        const t = order[q];
        if (!keptOne && wind[t] === Math.sign(net)) keptOne = true;
        else drop[t] = 1;
      }
      const pos = e - s;
      const pairs = (pos - Math.abs(net)) / 2;
      removed.foldedPairs += pairs;
      removed.duplicates += Math.max(0, Math.abs(net) - 1);
    }
    s = e;
  }
  if (removed.foldedPairs === 0 && removed.duplicates === 0) return { indices, removed };
  const out: number[] = [];
  for (let t = 0; t < T; t++) if (!drop[t]) out.push(indices[3 * t], indices[3 * t + 1], indices[3 * t + 2]);
  return { indices: Uint32Array.from(out), removed };
}
