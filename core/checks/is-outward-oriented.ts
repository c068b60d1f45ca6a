/**
 * Outward oriented: every closed component encloses positive signed volume (Σ det(a, b, c) / 6 over
 * its triangles, by the divergence theorem), so its counter-clockwise faces look outward, as glTF
 * expects. An inside-out component (all faces flipped) is closed and consistently wound but fails
 * here. Open components have no enclosed volume and are not judged.
 */
import type { MeshData } from '../types.js';
import { CHECK_EXAMPLES, vertexPoint, type CheckResult } from './check-result.js';
import { buildEdgeTable, type EdgeTable } from './edge-table.js';
import { findComponents } from './find-components.js';

/**
 * Checks the orientation of each closed component of `mesh`. `where` lists one vertex of each
 * inside-out component.
 * @param edges the mesh's edge table, when the caller already built it.
 * @param components the mesh's components (`findComponents`), when the caller already found them.
 */
export function isOutwardOriented(mesh: MeshData, edges?: EdgeTable, components?: { triComponent: Uint32Array; count: number }): CheckResult {
  const { positions, indices } = mesh;
  const V = positions.length / 3;
  const table = edges ?? buildEdgeTable(indices, V);
  const { triComponent, count } = components ?? findComponents(indices, V);
  const volume = new Float64Array(count);
  const firstVertex = new Int32Array(count).fill(-1);
  for (let t = 0; t < indices.length / 3; t++) {
    const c = triComponent[t];
    const a = indices[3 * t], b = indices[3 * t + 1], d = indices[3 * t + 2];
    if (firstVertex[c] < 0) firstVertex[c] = a;
    volume[c] += signedTetVolume(positions, a, b, d);
  }
  // A component is closed when each of its edges is used once in each direction.
  const vertComp = new Int32Array(V).fill(-1);
  for (let t = 0; t < indices.length / 3; t++) for (let k = 0; k < 3; k++) vertComp[indices[3 * t + k]] = triComponent[t];
  const open = new Uint8Array(count);
  for (let e = 0; e < table.count; e++) {
    if (table.forward[e] !== 1 || table.backward[e] !== 1) open[vertComp[table.ends[2 * e]]] = 1;
  }
  const bad: number[] = [];
  for (let c = 0; c < count; c++) if (!open[c] && !(volume[c] > 0)) bad.push(c);
  return {
    name: 'outward-oriented',
    definition: 'every closed component encloses positive signed volume (faces wound counter-clockwise seen from outside)',
    ok: bad.length === 0,
    count: bad.length,
    unit: 'components',
    where: bad.slice(0, CHECK_EXAMPLES).map((c) => vertexPoint(positions, firstVertex[c])),
  };
}

function signedTetVolume(p: Float32Array, a: number, b: number, c: number): number {
  const ax = p[3 * a], ay = p[3 * a + 1], az = p[3 * a + 2];
  const bx = p[3 * b], by = p[3 * b + 1], bz = p[3 * b + 2];
  const cx = p[3 * c], cy = p[3 * c + 1], cz = p[3 * c + 2];
  return (ax * (by * cz - bz * cy) - ay * (bx * cz - bz * cx) + az * (bx * cy - by * cx)) / 6;
}
