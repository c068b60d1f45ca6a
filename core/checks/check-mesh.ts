/**
 * The bake's check stage on one mesh, as one call: a single topology scan shared by the report's figures
 * (`analyzeMesh`) and the named checks (`runChecks`), plus the self-intersection search. Pure and
 * synchronous; a front end that has threads can run it on another one while the field is evaluated
 * (`BakeOptions.meshChecker`), since its input is fixed once the base level's triangles are.
 */
import type { MeshData } from '../types.js';
import { analyzeMesh, type MeshReport } from './analyze-mesh.js';
import type { CheckResult } from './check-result.js';
import { findSelfIntersections } from './find-self-intersections.js';
import { buildMeshTopology } from './mesh-topology.js';
import { runChecks } from './run-checks.js';

/** What the check stage learns about one mesh: plain data, so it can cross threads as it is. */
export interface MeshChecks {
  report: MeshReport;
  /** Pairs of triangles that cross or overlap (find-self-intersections.ts). */
  selfIntersections: number;
  /** Every named check, in run-checks.ts's order, without the definitions. */
  checks: Pick<CheckResult, 'name' | 'ok' | 'count' | 'unit' | 'where'>[];
  /** Seconds the checks took where they ran. */
  seconds: number;
}

/**
 * Checks `mesh` (positions and indices; normals and colors are not read).
 *
 * @example
 * const { report, selfIntersections } = checkMesh(mesh);
 */
export function checkMesh(mesh: MeshData): MeshChecks {
  const t0 = performance.now();
  const topology = buildMeshTopology(mesh);
  const report = analyzeMesh(mesh, topology);
  const selfIntersections = findSelfIntersections(mesh).length / 2;
  const checks = runChecks(mesh, topology).map(({ name, ok, count, unit, where }) => ({ name, ok, count, unit, where }));
  return { report, selfIntersections, checks, seconds: (performance.now() - t0) / 1000 };
}
