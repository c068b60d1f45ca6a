/** Open and non-manifold edges as segments, on hand-made meshes whose answers can be counted. */
import { describe, expect, it } from 'vitest';
import { collectProblemEdges } from '../../../core/checks/collect-problem-edges.js';

// A tetrahedron, one vertex per row:
//   3
//   |\      faces (outward): 0-2-1, 0-1-3, 1-2-3, 2-0-3
//   0-1-2
const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1]);
const closed = new Uint32Array([0, 2, 1, 0, 1, 3, 1, 2, 3, 2, 0, 3]);

describe('collectProblemEdges', () => {
  it('a closed tetrahedron has none', () => {
    const r = collectProblemEdges({ positions, indices: closed });
    expect(r.open.length).toBe(0);
    expect(r.nonManifold.length).toBe(0);
  });

  it('removing one face opens its three edges: the hole is that triangle', () => {
    // Without face 0-2-1 the edges 0-2, 2-1, 1-0 are each used once.
    const r = collectProblemEdges({ positions, indices: closed.slice(3) });
    expect(r.nonManifold.length).toBe(0);
    expect(r.open.length).toBe(3 * 6);
    const ends = new Set<string>();
    for (let i = 0; i < r.open.length; i += 3) ends.add([r.open[i], r.open[i + 1], r.open[i + 2]].join(','));
    expect([...ends].sort()).toEqual(['0,0,0', '0,1,0', '1,0,0']); // vertices 0, 2, 1: the base
  });

  it('three triangles on one edge make it non-manifold; their other edges are open', () => {
    //      2
    //     /|\      three fins around edge 0-1 (x axis): apexes 2, 3, 4
    //   0---1
    const p = new Float32Array([0, 0, 0, 1, 0, 0, 0.5, 1, 0, 0.5, 0, 1, 0.5, -1, 0]);
    const r = collectProblemEdges({ positions: p, indices: new Uint32Array([0, 1, 2, 1, 0, 3, 0, 1, 4]) });
    expect(Array.from(r.nonManifold)).toEqual([0, 0, 0, 1, 0, 0]);
    expect(r.open.length).toBe(6 * 6); // two free edges per fin
  });

  it('refuses arrays of the wrong length', () => {
    expect(() => collectProblemEdges({ positions: new Float32Array(4), indices: new Uint32Array(3) })).toThrow('collectProblemEdges: positions must hold 3 floats per vertex');
    expect(() => collectProblemEdges({ positions, indices: new Uint32Array(4) })).toThrow('collectProblemEdges: indices must hold 3 per triangle');
  });
});
