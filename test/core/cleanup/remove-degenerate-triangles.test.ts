/**
 * Degenerate-triangle removal keeps a closed mesh closed: a cap (a corner on the opposite edge) is
 * flipped away, a needle (two corners at one place) collapsed, a repeated-index triangle dropped.
 */
import { describe, expect, test } from 'vitest';
import { removeDegenerateTriangles } from '../../../core/cleanup/remove-degenerate-triangles.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { mesh, octahedron } from '../checks/test-meshes.js';

/**
 * The octahedron with its +x/+y edge (vertices 0 and 2) split by a new vertex 6 on one side only:
 * face (5, 2, 0) becomes (5, 2, 6), (6, 0, 5) and the flat triangle (2, 0, 6). Closed and manifold,
 * one degenerate triangle. At `at` = (0.5, 0.5, 0) it is a cap (6 lies on edge 2–0); at `at` = the
 * position of vertex 0 it is a needle (6 sits on 0).
 * ```
 *   2 (+y) ─────────── 0 (+x)       face (0, 2, 4) lies across edge 2–0 (towards +z)
 *     \  \___ 6 ___/  /
 *      \             /              (5, 2, 6) and (6, 0, 5) fill the old face (5, 2, 0)
 *       ─── 5 (−z) ──
 * ```
 */
function splitOctahedron(at: [number, number, number]) {
  const o = octahedron();
  const t = [...o.indices];
  const f = t.findIndex((_, i) => i % 3 === 0 && t[i] === 5 && t[i + 1] === 2 && t[i + 2] === 0);
  t.splice(f, 3, 5, 2, 6, 6, 0, 5, 2, 0, 6);
  return mesh([...o.positions, ...at], t);
}

describe('removeDegenerateTriangles', () => {
  test('a cap is flipped away: closed, manifold, no degenerate triangle, same volume', () => {
    const m = splitOctahedron([0.5, 0.5, 0]);
    expect(analyzeMesh(m).degenerateTriangles).toBe(1);
    const { mesh: out, removed } = removeDegenerateTriangles(m);
    expect(removed).toMatchObject({ found: 1, flipped: 1, collapsed: 0, remaining: 0 });
    expect(runChecks(out).filter((c) => !c.ok)).toEqual([]);
    // A flip re-tiles the neighbour exactly: the volume stays the octahedron's 4/3.
    expect(analyzeMesh(out).volume).toBeCloseTo(4 / 3, 6);
    expect(analyzeMesh(out).eulerCharacteristic).toBe(2);
  });

  test('a needle is collapsed: the duplicate corner disappears and the octahedron is back', () => {
    const m = splitOctahedron([1, 0, 0]);
    // Both (2, 0, 6) and (6, 0, 5) are flat: 6 sits on 0.
    expect(analyzeMesh(m).degenerateTriangles).toBe(2);
    const { mesh: out, removed } = removeDegenerateTriangles(m);
    expect(removed.remaining).toBe(0);
    expect(removed.collapsed).toBe(1);
    expect(out.positions.length / 3).toBe(6);
    expect(out.indices.length / 3).toBe(8);
    expect(runChecks(out).filter((c) => !c.ok)).toEqual([]);
    expect(analyzeMesh(out).volume).toBeCloseTo(4 / 3, 6);
  });

  test('a triangle that repeats a vertex index is dropped', () => {
    const o = octahedron();
    const m = mesh([...o.positions], [...o.indices, 0, 0, 2]);
    const { mesh: out, removed } = removeDegenerateTriangles(m);
    expect(removed).toMatchObject({ found: 1, dropped: 1, remaining: 0 });
    expect(runChecks(out).filter((c) => !c.ok)).toEqual([]);
  });

  test('a mesh without degenerate triangles comes back unchanged (the same object)', () => {
    const o = octahedron();
    expect(removeDegenerateTriangles(o).mesh).toBe(o);
  });
});
