/** Floaters below a fraction of the largest part's area are dropped and reported; the default only counts them. */
import { describe, expect, test } from 'vitest';
import { countSmallParts, removeSmallParts } from '../../../core/cleanup/remove-small-parts.js';
import { compactMesh } from '../../../core/cleanup/compact-mesh.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { mesh, octahedron } from '../checks/test-meshes.js';

/** A unit octahedron (area 4√3) and a floater: the same shape scaled by `s` (area 4√3 s²), moved to x = 5. */
function withFloater(s: number) {
  const o = octahedron();
  const p = [...o.positions];
  const small = [...o.positions].map((x, i) => x * s + (i % 3 === 0 ? 5 : 0));
  return mesh([...p, ...small], [...o.indices, ...[...o.indices].map((v) => v + 6)]);
}

describe('removeSmallParts', () => {
  test('a floater with 1% of the main part’s area goes at --min-part 0.02 and stays at 0.005', () => {
    const m = withFloater(0.1); // area ratio s² = 0.01
    const gone = removeSmallParts(m, 0.02);
    expect(gone.removed.parts).toBe(1);
    expect(gone.removed.triangles).toBe(8);
    expect(gone.removed.area).toBeCloseTo(4 * Math.sqrt(3) * 0.01, 6); // octahedron area 4√3 (8 equilateral faces of side √2)
    expect(gone.mesh.positions.length / 3).toBe(6);
    expect(analyzeMesh(gone.mesh).components).toBe(1);
    expect(removeSmallParts(m, 0.005).removed.parts).toBe(0);
  });

  test('countSmallParts finds the floater for the warning without removing it', () => {
    const c = countSmallParts(withFloater(0.05)); // 0.25% of the area, under the 1% warning line
    expect(c.parts).toBe(1);
    expect(c.largest).toBeCloseTo(4 * Math.sqrt(3), 6);
  });

  test('normals and colors follow their vertices through compaction', () => {
    const m = withFloater(0.1);
    m.colors = new Float32Array(m.positions.length).map((_, i) => (i < 18 ? 0.25 : 0.75));
    const out = removeSmallParts(m, 0.02).mesh;
    expect([...out.colors!].every((c) => c === 0.25)).toBe(true);
    // Compaction renumbers vertices by first use but every triangle keeps its corners' positions.
    const c = compactMesh(m).mesh;
    for (let i = 0; i < m.indices.length; i++) {
      for (let k = 0; k < 3; k++) expect(c.positions[3 * c.indices[i] + k]).toBe(m.positions[3 * m.indices[i] + k]);
    }
  });
});
