/** Guarantee checks written once and reused by tests. */
import { expect } from 'vitest';
import { analyzeMesh, type MeshReport } from '../../core/checks/analyze-mesh.js';
import type { MeshData } from '../../core/types.js';

/** Asserts the mesh is closed, edge- and vertex-manifold, consistently wound outward, without zero-area triangles. */
export function expectClosedManifold(mesh: MeshData, label = ''): MeshReport {
  const r = analyzeMesh(mesh);
  const ctx = `${label}: ${JSON.stringify(r.where)}`;
  expect(r.triangles, ctx).toBeGreaterThan(0);
  expect(r.boundaryEdges, ctx).toBe(0);
  expect(r.nonManifoldEdges, ctx).toBe(0);
  expect(r.nonManifoldVertices, ctx).toBe(0);
  expect(r.inconsistentEdges, ctx).toBe(0);
  expect(r.degenerateTriangles, ctx).toBe(0);
  expect(r.watertight, ctx).toBe(true);
  expect(r.volume, ctx).toBeGreaterThan(0);
  return r;
}

/** Asserts topology figures. */
export function expectMesh(mesh: MeshData, want: { components?: number; genus?: number; euler?: number }, label = ''): MeshReport {
  const r = expectClosedManifold(mesh, label);
  if (want.components !== undefined) expect(r.components, label).toBe(want.components);
  if (want.genus !== undefined) expect(r.genus, label).toBe(want.genus);
  if (want.euler !== undefined) expect(r.eulerCharacteristic, label).toBe(want.euler);
  return r;
}

/** Deterministic PRNG (mulberry32) for seeded tests. */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
