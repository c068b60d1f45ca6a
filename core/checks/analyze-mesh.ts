/**
 * Runs every topology check on a mesh and gathers the figures the report and the `check` command print.
 *
 * Words, as Fieldkiln uses them:
 * - watertight: no boundary edges, every edge used by exactly two triangles, wound consistently
 *   (each shared edge runs in opposite directions in its two triangles), and no non-manifold vertex.
 * - Euler characteristic χ = V − E + F over the vertices that triangles use; genus per closed,
 *   orientable component g = (2 − χ) / 2.
 * - volume: signed, by the divergence theorem (Σ det(a, b, c) / 6); positive when normals point outward.
 */
import type { MeshData } from '../types.js';
import { findBoundaryEdges } from './find-boundary-edges.js';
import { triangleArea } from './find-degenerate-triangles.js';
import { findInconsistentWinding } from './find-inconsistent-winding.js';
import { findNonManifoldEdges } from './find-non-manifold-edges.js';
import { buildMeshTopology, type MeshTopology } from './mesh-topology.js';

export interface ComponentReport {
  triangles: number;
  area: number;
  volume: number;
  eulerCharacteristic: number;
  /** (2 − χ) / 2 when the component is closed; null when it has boundary or non-manifold edges. */
  genus: number | null;
}

export interface MeshReport {
  vertices: number;
  triangles: number;
  watertight: boolean;
  boundaryEdges: number;
  nonManifoldEdges: number;
  nonManifoldVertices: number;
  inconsistentEdges: number;
  degenerateTriangles: number;
  components: number;
  eulerCharacteristic: number;
  /** Sum of the components' genera, or null when any component is open. */
  genus: number | null;
  /** m² */
  area: number;
  /** m³, signed */
  volume: number;
  perComponent: ComponentReport[];
  /** Where checks fail: a few examples each (vertex positions, metres). */
  where: { boundaryEdges: number[][]; nonManifoldEdges: number[][]; nonManifoldVertices: number[][]; inconsistentEdges: number[][]; degenerateTriangles: number[][] };
}

const EXAMPLES = 5;

/**
 * Analyzes `mesh`: topology, components, Euler characteristic, genus, area and signed volume.
 * @param topology the mesh's shared scans ({@link buildMeshTopology}), when the caller already made them.
 */
export function analyzeMesh(mesh: MeshData, topology: MeshTopology = buildMeshTopology(mesh)): MeshReport {
  const { positions, indices } = mesh;
  const V = positions.length / 3;
  const F = indices.length / 3;
  const { edges, nonManifoldVertices: nmVerts, degenerateTriangles: degenerate } = topology;
  const boundary = findBoundaryEdges(edges);
  const nonManifold = findNonManifoldEdges(edges);
  const inconsistent = findInconsistentWinding(edges);
  const { triComponent, count } = topology.components;

  const comp = Array.from({ length: count }, () => ({ v: 0, e: 0, f: 0, area: 0, volume: 0, open: false }));
  const vertComp = new Int32Array(V).fill(-1);
  for (let t = 0; t < F; t++) {
    const c = triComponent[t];
    const a = indices[3 * t], b = indices[3 * t + 1], d = indices[3 * t + 2];
    const k = comp[c];
    if (vertComp[a] < 0) {
      vertComp[a] = c;
      k.v++;
    }
    if (vertComp[b] < 0) {
      vertComp[b] = c;
      k.v++;
    }
    if (vertComp[d] < 0) {
      vertComp[d] = c;
      k.v++;
    }
    k.f++;
    k.area += triangleArea(positions, a, b, d);
    k.volume += signedTetVolume(positions, a, b, d);
  }
  for (let e = 0; e < edges.count; e++) {
    const c = vertComp[edges.ends[2 * e]];
    comp[c].e++;
    const uses = edges.forward[e] + edges.backward[e];
    if (uses !== 2 || edges.forward[e] !== 1) comp[c].open = true;
  }
  const perComponent: ComponentReport[] = comp.map((c) => {
    const chi = c.v - c.e + c.f;
    return { triangles: c.f, area: c.area, volume: c.volume, eulerCharacteristic: chi, genus: c.open ? null : (2 - chi) / 2 };
  });
  const usedV = comp.reduce((s, c) => s + c.v, 0);
  const chi = usedV - edges.count + F;
  const anyOpen = perComponent.some((c) => c.genus === null);
  const edgePts = (ids: number[]) =>
    ids.slice(0, EXAMPLES).map((e) => {
      const a = edges.ends[2 * e];
      const b = edges.ends[2 * e + 1];
      return [0, 1, 2].map((k) => round6((positions[3 * a + k] + positions[3 * b + k]) / 2));
    });
  return {
    vertices: V,
    triangles: F,
    watertight: F > 0 && boundary.length === 0 && nonManifold.length === 0 && inconsistent.length === 0 && nmVerts.length === 0,
    boundaryEdges: boundary.length,
    nonManifoldEdges: nonManifold.length,
    nonManifoldVertices: nmVerts.length,
    inconsistentEdges: inconsistent.length,
    degenerateTriangles: degenerate.length,
    components: count,
    eulerCharacteristic: chi,
    genus: anyOpen ? null : perComponent.reduce((s, c) => s + (c.genus ?? 0), 0),
    area: perComponent.reduce((s, c) => s + c.area, 0),
    volume: perComponent.reduce((s, c) => s + c.volume, 0),
    perComponent,
    where: {
      boundaryEdges: edgePts(boundary),
      nonManifoldEdges: edgePts(nonManifold),
      nonManifoldVertices: nmVerts.slice(0, EXAMPLES).map((v) => [0, 1, 2].map((k) => round6(positions[3 * v + k]))),
      inconsistentEdges: edgePts(inconsistent),
      degenerateTriangles: degenerate.slice(0, EXAMPLES).map((t) => [0, 1, 2].map((k) => round6(positions[3 * indices[3 * t] + k]))),
    },
  };
}

function signedTetVolume(p: Float32Array, a: number, b: number, c: number): number {
  const ax = p[3 * a], ay = p[3 * a + 1], az = p[3 * a + 2];
  const bx = p[3 * b], by = p[3 * b + 1], bz = p[3 * b + 2];
  const cx = p[3 * c], cy = p[3 * c + 1], cz = p[3 * c + 2];
  return (ax * (by * cz - bz * cy) - ay * (bx * cz - bz * cx) + az * (bx * cy - by * cx)) / 6;
}

function round6(x: number): number {
  return Math.round(x * 1e6) / 1e6;
}

/** Watertight, as defined above. */
export function isWatertight(r: MeshReport): boolean {
  return r.watertight;
}
/** Every edge used by at most two triangles and every vertex a single fan. */
export function isManifold(r: MeshReport): boolean {
  return r.nonManifoldEdges === 0 && r.nonManifoldVertices === 0;
}
/** Closed, manifold, consistently wound, with positive volume (normals outward). */
export function isOutwardClosed(r: MeshReport): boolean {
  return r.watertight && r.volume > 0;
}
