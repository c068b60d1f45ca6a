/**
 * Vertex-manifold: the triangles around every vertex form a single fan (a disk, or a half disk on
 * a boundary). A "bow-tie" vertex, where two cones touch at their tips, breaks it even when every
 * edge is fine.
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, vertexPoint, type CheckResult } from './check-result.js';
import { findNonManifoldVertices } from './find-non-manifold-vertices.js';

/**
 * Checks that every vertex of `mesh` is a single fan. `where` lists the positions of the other vertices.
 * @param nonManifold the mesh's non-manifold vertices (`findNonManifoldVertices`), when the caller already found them.
 */
export function isVertexManifold(mesh: MeshData, nonManifold?: number[]): CheckResult {
  const bad = nonManifold ?? findNonManifoldVertices(mesh.indices, mesh.positions.length / 3);
  return {
    name: 'vertex-manifold',
    definition: 'the triangles around every vertex form a single fan',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'vertices',
    where: bad.slice(0, CHECK_EXAMPLES).map((v) => vertexPoint(mesh.positions, v)),
  };
}
