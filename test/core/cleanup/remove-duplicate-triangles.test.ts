/** Folds (opposite-wound twins) and duplicates (same-wound twins) left by the simplifier are removed, keeping the mesh closed. */
import { describe, expect, test } from 'vitest';
import { removeDuplicateTriangles } from '../../../core/cleanup/remove-duplicate-triangles.js';
import { compactMesh } from '../../../core/cleanup/compact-mesh.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { mesh, octahedron, withDuplicate } from '../checks/test-meshes.js';

describe('removeDuplicateTriangles', () => {
  test('a fold (a flap of two opposite-wound triangles on an edge) is removed and the mesh is closed again', () => {
    // Octahedron plus a flap on edge 0–2: (0, 2, 6) and (0, 6, 2) with a new tip 6; the flap makes
    // edge 0–2 used four times. This is what meshoptimizer left on the torus (see decimate-mesh.ts).
    const o = octahedron();
    const m = mesh([...o.positions, 0.6, 0.6, 0.1], [...o.indices, 0, 2, 6, 0, 6, 2]);
    expect(runChecks(m).find((c) => c.name === 'edge-manifold')!.ok).toBe(false);
    const { indices, removed } = removeDuplicateTriangles(m.indices);
    expect(removed).toEqual({ foldedPairs: 1, duplicates: 0 });
    const out = compactMesh(m, indices).mesh;
    expect(out.positions.length / 3).toBe(6); // the tip is unused and dropped
    expect(runChecks(out).filter((c) => !c.ok)).toEqual([]);
  });

  test('a same-wound duplicate keeps one copy', () => {
    const m = withDuplicate(octahedron(), 4);
    const { indices, removed } = removeDuplicateTriangles(m.indices);
    expect(removed).toEqual({ foldedPairs: 0, duplicates: 1 });
    expect(indices.length / 3).toBe(8);
    expect(runChecks({ positions: m.positions, indices }).filter((c) => !c.ok)).toEqual([]);
  });

  test('a mesh without twins keeps its index buffer', () => {
    const o = octahedron();
    expect(removeDuplicateTriangles(o.indices).indices).toBe(o.indices);
  });
});
