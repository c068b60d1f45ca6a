/**
 * Runs every named check in this folder on one mesh, scanning its topology once, and returns
 * the results in a fixed order. `fieldkiln check` prints them; the bake pipeline puts them in its
 * report. The order: finite, closed, edge-manifold, vertex-manifold, consistently-wound,
 * no-degenerate-triangles, outward-oriented.
 */
import type { MeshData } from '../types.js';
import type { CheckResult } from './check-result.js';
import { hasFinitePositions } from './has-finite-positions.js';
import { hasNoDegenerateTriangles } from './has-no-degenerate-triangles.js';
import { isClosed } from './is-closed.js';
import { isConsistentlyWound } from './is-consistently-wound.js';
import { isEdgeManifold } from './is-edge-manifold.js';
import { isOutwardOriented } from './is-outward-oriented.js';
import { isVertexManifold } from './is-vertex-manifold.js';
import { buildMeshTopology, type MeshTopology } from './mesh-topology.js';

/**
 * All checks on `mesh`. When `finite` fails (NaN coordinates or out-of-range indices) only that
 * result is returned: the other checks would be meaningless or index out of range.
 *
 * @param topology the mesh's shared scans ({@link buildMeshTopology}), when the caller already made
 *   them (the bake pipeline shares one with `analyzeMesh`). Used only once `finite` has passed.
 * @example
 * const failed = runChecks(mesh).filter((c) => !c.ok).map((c) => c.name);
 */
export function runChecks(mesh: MeshData, topology?: MeshTopology): CheckResult[] {
  if (mesh.positions.length % 3 !== 0 || mesh.indices.length % 3 !== 0) {
    throw new Error('runChecks: positions and indices must hold 3 values per vertex and per triangle');
  }
  const finite = hasFinitePositions(mesh);
  if (!finite.ok) return [finite];
  const { edges, nonManifoldVertices, degenerateTriangles, components } = topology ?? buildMeshTopology(mesh);
  return [
    finite,
    isClosed(mesh, edges),
    isEdgeManifold(mesh, edges),
    isVertexManifold(mesh, nonManifoldVertices),
    isConsistentlyWound(mesh, edges),
    hasNoDegenerateTriangles(mesh, 0, degenerateTriangles),
    isOutwardOriented(mesh, edges, components),
  ];
}

/** True when every check in `results` passed. */
export function allChecksPass(results: readonly CheckResult[]): boolean {
  return results.every((r) => r.ok);
}
