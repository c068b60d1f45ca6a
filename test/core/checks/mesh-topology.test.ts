/**
 * The shared topology scan (core/checks/mesh-topology.ts) and the edge table it holds
 * (core/checks/edge-table.ts). Expected values come from the hand-built meshes' known topology
 * (test-meshes.ts) and from the definitions: a scan made once and handed to `analyzeMesh` and
 * `runChecks` must give exactly what each gives when it scans the mesh itself.
 */
import { describe, expect, test } from 'vitest';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { buildEdgeTable } from '../../../core/checks/edge-table.js';
import { buildMeshTopology } from '../../../core/checks/mesh-topology.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { bowTie, insideOut, mesh, octahedron, tetrahedron, withDuplicate, withFlipped, withHole } from './test-meshes.js';

describe('buildEdgeTable', () => {
  test('a tetrahedron has 6 edges, listed by (a, b), each used once in each direction', () => {
    // Tetrahedron indices 0 2 1 / 0 1 3 / 0 3 2 / 1 2 3: every pair of its 4 vertices is an edge (4·3/2 = 6),
    // and in a closed, consistently wound surface each edge runs once each way.
    const e = buildEdgeTable(tetrahedron().indices, 4);
    expect(e.count).toBe(6);
    expect(Array.from(e.ends)).toEqual([0, 1, 0, 2, 0, 3, 1, 2, 1, 3, 2, 3]);
    expect(Array.from(e.forward)).toEqual([1, 1, 1, 1, 1, 1]);
    expect(Array.from(e.backward)).toEqual([1, 1, 1, 1, 1, 1]);
  });

  test('a triangle with a repeated index gives a self-edge, counted as running backward', () => {
    //  (0, 0, 1): half-edges 0→0, 0→1, 1→0. Edge (0, 0) once backward; edge (0, 1) once each way.
    const e = buildEdgeTable(Uint32Array.from([0, 0, 1]), 2);
    expect(Array.from(e.ends)).toEqual([0, 0, 0, 1]);
    expect(Array.from(e.forward)).toEqual([0, 1]);
    expect(Array.from(e.backward)).toEqual([1, 1]);
  });

  test('a duplicated face uses its three edges four times, twice in each direction', () => {
    const e = buildEdgeTable(withDuplicate(octahedron(), 0).indices, 6);
    expect(e.count).toBe(12); // an octahedron has 12 edges (6 − 12 + 8 = 2)
    const heavy = Array.from({ length: e.count }, (_, k) => e.forward[k] + e.backward[k]).filter((u) => u === 3);
    expect(heavy.length).toBe(3); // the duplicate's edges: 2 original uses + 1 more each
  });
});

describe('buildMeshTopology', () => {
  const cases = {
    tetrahedron: tetrahedron(),
    'octahedron with a hole': withHole(octahedron(), 0),
    'octahedron with a duplicate face': withDuplicate(octahedron(), 0),
    'octahedron with a flipped face': withFlipped(octahedron(), 3),
    'inside-out octahedron': insideOut(octahedron()),
    'bow tie': bowTie(),
    'flat triangle beside a tetrahedron': mesh([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 2, 0, 0, 3, 0, 0, 4, 0, 0], [0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3, 4, 5, 6]),
  };
  for (const [name, m] of Object.entries(cases)) {
    test(`${name}: analyzeMesh and runChecks give the same with a shared scan as without`, () => {
      const topology = buildMeshTopology(m);
      expect(analyzeMesh(m, topology)).toEqual(analyzeMesh(m));
      expect(runChecks(m, topology)).toEqual(runChecks(m));
    });
  }

  test('the bow tie: one non-manifold vertex (the shared apex), no degenerate triangles, one component', () => {
    const t = buildMeshTopology(bowTie());
    expect(t.nonManifoldVertices).toEqual([0]);
    expect(t.degenerateTriangles).toEqual([]);
    expect(t.components.count).toBe(1); // the cones touch at vertex 0
  });

  test('a flat triangle (three points on one line) is listed as degenerate', () => {
    // Points (2,0,0), (3,0,0), (4,0,0) are collinear: zero area. It shares no vertex with the tetrahedron.
    const t = buildMeshTopology(cases['flat triangle beside a tetrahedron']);
    expect(t.degenerateTriangles).toEqual([4]);
    expect(t.components.count).toBe(2);
  });
});
