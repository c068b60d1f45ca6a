/**
 * The scans every topology check starts from, made once per mesh: the edge table, the non-manifold
 * vertices, the degenerate triangles and the connected components. `analyzeMesh` and `runChecks` each
 * take one, so the bake pipeline scans its base level once for both (each used to build its own).
 */
import type { MeshData } from '../types.js';
import { buildEdgeTable, type EdgeTable } from './edge-table.js';
import { findComponents } from './find-components.js';
import { findDegenerateTriangles } from './find-degenerate-triangles.js';
import { findNonManifoldVertices } from './find-non-manifold-vertices.js';

/** One mesh's shared scans. Valid only for the mesh it was built from, unchanged. */
export interface MeshTopology {
  edges: EdgeTable;
  /** Vertices whose triangles do not form one fan, ascending (see find-non-manifold-vertices.ts). */
  nonManifoldVertices: number[];
  /** Triangles with a repeated index or zero area, ascending (`minArea` 0). */
  degenerateTriangles: number[];
  /** Each triangle's component, numbered by first triangle, and the count (see find-components.ts). */
  components: { triComponent: Uint32Array; count: number };
}

/**
 * Scans `mesh` once for the topology checks. Indices must name vertices (`hasFinitePositions` checks it).
 *
 * @example
 * const topology = buildMeshTopology(mesh);
 * const report = analyzeMesh(mesh, topology);
 * const checks = runChecks(mesh, topology);
 */
export function buildMeshTopology(mesh: Pick<MeshData, 'positions' | 'indices'>): MeshTopology {
  const { positions, indices } = mesh;
  const V = positions.length / 3;
  return {
    edges: buildEdgeTable(indices, V),
    nonManifoldVertices: findNonManifoldVertices(indices, V),
    degenerateTriangles: findDegenerateTriangles(positions, indices),
    components: findComponents(indices, V),
  };
}
