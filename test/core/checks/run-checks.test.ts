/**
 * The named checks of core/checks on hand-built meshes changed in one way each, and a cross-check of
 * our verdict against manifold-3d (an independent manifold geometry library) on good meshes and
 * meshes broken by one change each.
 */
import Module from 'manifold-3d';
import { beforeAll, describe, expect, test } from 'vitest';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { runChecks, allChecksPass } from '../../../core/checks/run-checks.js';
import { isClosed } from '../../../core/checks/is-closed.js';
import { isEdgeManifold } from '../../../core/checks/is-edge-manifold.js';
import { isVertexManifold } from '../../../core/checks/is-vertex-manifold.js';
import { isConsistentlyWound } from '../../../core/checks/is-consistently-wound.js';
import { isOutwardOriented } from '../../../core/checks/is-outward-oriented.js';
import { hasNoDegenerateTriangles } from '../../../core/checks/has-no-degenerate-triangles.js';
import { hasFinitePositions } from '../../../core/checks/has-finite-positions.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { bowTie, centroidOf, insideOut, mesh, octahedron, tetrahedron, withDuplicate, withFlipped, withHole } from './test-meshes.js';

const failing = (m: MeshData) => runChecks(m).filter((c) => !c.ok).map((c) => c.name);

describe('each check names the one thing a one-change mesh breaks, and where', () => {
  test('a closed tetrahedron passes every check', () => {
    // Tetrahedron: V − E + F = 4 − 6 + 4 = 2 (Euler), volume 1/6 (unit corner tetrahedron).
    const m = tetrahedron();
    expect(failing(m)).toEqual([]);
    expect(allChecksPass(runChecks(m))).toBe(true);
    const a = analyzeMesh(m);
    expect(a.eulerCharacteristic).toBe(2);
    expect(a.genus).toBe(0);
    expect(a.volume).toBeCloseTo(1 / 6, 6);
  });

  test('one triangle removed: closed fails at its three edges', () => {
    const m = withHole(octahedron(), 0); // face (+x, +y, +z) removed
    const r = isClosed(m);
    expect(failing(m)).toEqual(['closed']);
    expect(r.count).toBe(3);
    // The boundary edges are the removed face's edges: their midpoints lie on the plane x + y + z = 1.
    for (const p of r.where) expect(p[0] + p[1] + p[2]).toBeCloseTo(1, 6);
  });

  test('one triangle duplicated: edge-manifold fails at its three edges', () => {
    const m = withDuplicate(octahedron(), 0);
    expect(failing(m)).toEqual(['edge-manifold']);
    const r = isEdgeManifold(m);
    expect(r.count).toBe(3);
    for (const p of r.where) expect(p[0] + p[1] + p[2]).toBeCloseTo(1, 6);
  });

  test('one triangle flipped: consistently-wound fails at its three edges', () => {
    const m = withFlipped(octahedron(), 3);
    const r = isConsistentlyWound(m);
    expect(failing(m)).toEqual(['consistently-wound']);
    expect(r.count).toBe(3);
    const c = centroidOf(m, 3);
    // Each bad edge is an edge of the flipped face: its midpoint lies within an edge's half-length of the centroid.
    for (const p of r.where) expect(Math.hypot(p[0] - c[0], p[1] - c[1], p[2] - c[2])).toBeLessThan(Math.SQRT2 / 2 + 1e-6);
  });

  test('a bow-tie vertex joining two cones: vertex-manifold fails at the shared apex only', () => {
    const m = bowTie();
    expect(failing(m)).toEqual(['vertex-manifold']);
    expect(isVertexManifold(m).where).toEqual([[0, 0, 0]]);
    // Two closed cones share one vertex: one component by vertex connectivity.
    expect(analyzeMesh(m).components).toBe(1);
  });

  test('inside out: closed and consistently wound, but outward-oriented fails', () => {
    const m = insideOut(octahedron());
    expect(failing(m)).toEqual(['outward-oriented']);
    expect(isOutwardOriented(m).count).toBe(1);
    expect(analyzeMesh(m).volume).toBeCloseTo(-4 / 3, 6); // octahedron |x|+|y|+|z| ≤ 1: volume 4/3
  });

  test('a zero-area triangle: no-degenerate-triangles fails at its centroid', () => {
    // Octahedron with the +x/+y edge split at its midpoint (0.5, 0.5, 0): triangle (+y, +x, m) is flat.
    const o = octahedron();
    const p = [...o.positions, 0.5, 0.5, 0];
    const t = [...o.indices];
    // Face (5, 2, 0) = (−z, +y, +x) lies across the edge 2–0 from face (0, 2, 4): split it into (5, 2, m), (m, 0, 5) and the cap (2, 0, m).
    const f = t.findIndex((_, i) => i % 3 === 0 && t[i] === 5 && t[i + 1] === 2 && t[i + 2] === 0);
    t.splice(f, 3, 5, 2, 6, 6, 0, 5, 2, 0, 6);
    const m = mesh(p, t);
    const r = hasNoDegenerateTriangles(m);
    expect(failing(m)).toEqual(['no-degenerate-triangles']);
    expect(r.where).toEqual([[1 / 3 + 0.5 / 3, 1 / 3 + 0.5 / 3, 0].map((x) => Math.round(x * 1e6) / 1e6)]);
  });

  test('a NaN coordinate or an out-of-range index: finite fails and the other checks are not run', () => {
    const m = tetrahedron();
    m.positions[4] = NaN;
    expect(runChecks(m).map((c) => [c.name, c.ok])).toEqual([['finite', false]]);
    const bad = tetrahedron();
    bad.indices[5] = 9;
    expect(hasFinitePositions(bad).ok).toBe(false);
  });
});

describe('cross-check with manifold-3d: our verdict and Manifold agree', () => {
  // Manifold's constructor accepts a mesh only when every edge is used by exactly two triangles,
  // running in opposite directions (its 2-manifold definition, include/manifold/manifold.h), and
  // throws NotManifold otherwise (../shared/DEPENDENCIES.md §6). Our matching verdict is
  // closed ∧ edge-manifold ∧ consistently wound. Manifold splits a pinched (bow-tie) vertex rather
  // than rejecting it, which our vertex-manifold check reports separately.
  let wasm: Awaited<ReturnType<typeof Module>>;
  beforeAll(async () => {
    wasm = await Module();
    wasm.setup();
  });
  const manifoldOf = (m: MeshData) => new wasm.Manifold(new wasm.Mesh({ numProp: 3, vertProperties: m.positions, triVerts: m.indices }));
  const ourVerdict = (m: MeshData) => isClosed(m).ok && isEdgeManifold(m).ok && isConsistentlyWound(m).ok;
  const manifoldVerdict = (m: MeshData) => {
    try {
      manifoldOf(m).delete();
      return true;
    } catch (e) {
      expect((e as { code?: string }).code ?? String(e)).toMatch(/NotManifold/);
      return false;
    }
  };

  const cases: { name: string; make: () => Promise<MeshData> | MeshData; manifold: boolean }[] = [];
  const mcSphere = async () => marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 5, level: 0 }));
  const mcTorus = async () => marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
  cases.push(
    { name: 'good: tetrahedron', make: tetrahedron, manifold: true },
    { name: 'good: octahedron', make: octahedron, manifold: true },
    { name: 'good: marching-cubes sphere (depth 5)', make: mcSphere, manifold: true },
    { name: 'good: marching-cubes torus (depth 5)', make: mcTorus, manifold: true },
    { name: 'broken: sphere with one triangle removed (hole)', make: async () => withHole(await mcSphere(), 100), manifold: false },
    { name: 'broken: sphere with one triangle duplicated', make: async () => withDuplicate(await mcSphere(), 100), manifold: false },
    { name: 'broken: torus with one triangle flipped', make: async () => withFlipped(await mcTorus(), 100), manifold: false },
    { name: 'broken: octahedron with one triangle flipped', make: () => withFlipped(octahedron(), 2), manifold: false },
    { name: 'pinched: bow-tie vertex joining two cones (Manifold splits it)', make: bowTie, manifold: true },
  );
  for (const c of cases) {
    test(c.name, async () => {
      const m = await c.make();
      expect(manifoldVerdict(m)).toBe(c.manifold);
      expect(ourVerdict(m)).toBe(manifoldVerdict(m));
    });
  }

  test('on good meshes, genus and volume agree with Manifold', async () => {
    for (const [name, m] of [['sphere', await mcSphere()], ['torus', await mcTorus()], ['octahedron', octahedron()]] as const) {
      const man = manifoldOf(m);
      const ours = analyzeMesh(m);
      expect(ours.genus, name).toBe(man.genus());
      expect(ours.volume, name).toBeCloseTo(man.volume(), 5);
      man.delete();
    }
  });

  test('bow-tie: Manifold splits the pinched apex into two parts, where our vertex-manifold check points', () => {
    const m = bowTie();
    const man = manifoldOf(m);
    // Manifold duplicates the shared apex: one more vertex than ours, two separate solids.
    expect(man.numVert()).toBe(m.positions.length / 3 + 1);
    const parts = man.decompose();
    expect(parts.length).toBe(2);
    parts.forEach((p) => p.delete());
    man.delete();
    expect(isVertexManifold(m).where).toEqual([[0, 0, 0]]);
  });
});
