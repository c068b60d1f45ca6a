/**
 * The undirected edges of an indexed triangle mesh with how often each is used in each direction.
 * Shared by the edge predicates so a mesh is scanned once.
 */
import { KeyMap } from '../sampling/key-map.js';

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
  const map = new KeyMap(indices.length);
  const ends: number[] = [];
  const fwd: number[] = [];
  const bwd: number[] = [];
  for (let t = 0; t < indices.length; t += 3) {
    for (let e = 0; e < 3; e++) {
      const a = indices[t + e];
      const b = indices[t + ((e + 1) % 3)];
      const lo = a < b ? a : b;
      const hi = a < b ? b : a;
      const key = lo * vertexCount + hi;
      let id = map.get(key);
      if (Number.isNaN(id)) {
        id = ends.length / 2;
        map.set(key, id);
        ends.push(lo, hi);
        fwd.push(0);
        bwd.push(0);
      }
      if (a < b) fwd[id]++;
      else bwd[id]++;
    }
  }
  return { ends: Uint32Array.from(ends), forward: Uint32Array.from(fwd), backward: Uint32Array.from(bwd), count: ends.length / 2 };
}
