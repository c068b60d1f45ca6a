/** Closest-point distances to a mesh through three-mesh-bvh (an outside implementation), for checking ours. */
import * as THREE from 'three';
import { MeshBVH } from 'three-mesh-bvh';
import type { MeshData } from '../../../core/types.js';

/** A function giving the distance from (x, y, z) to `mesh`, metres. */
export function bvhDistance(mesh: MeshData): (x: number, y: number, z: number) => number {
  const geom = new THREE.BufferGeometry();
  geom.setAttribute('position', new THREE.BufferAttribute(mesh.positions, 3));
  geom.setIndex(new THREE.BufferAttribute(mesh.indices.slice(), 1)); // a copy: MeshBVH reorders the index buffer in place
  const bvh = new MeshBVH(geom);
  const q = new THREE.Vector3();
  const hit = { point: new THREE.Vector3(), distance: 0, faceIndex: 0 };
  return (x, y, z) => {
    q.set(x, y, z);
    bvh.closestPointToPoint(q, hit);
    return hit.distance;
  };
}

/** Largest distance from the used vertices of `from`, and from its triangle centroids when asked, to `to`. */
export function oneSidedDistance(from: MeshData, to: MeshData, centroids = true): number {
  const d = bvhDistance(to);
  const p = from.positions;
  let worst = 0;
  const used = new Uint8Array(p.length / 3);
  for (const v of from.indices) used[v] = 1;
  for (let v = 0; v < used.length; v++) if (used[v]) worst = Math.max(worst, d(p[3 * v], p[3 * v + 1], p[3 * v + 2]));
  if (centroids) {
    const ix = from.indices;
    for (let t = 0; t < ix.length; t += 3) {
      const c = [0, 1, 2].map((k) => (p[3 * ix[t] + k] + p[3 * ix[t + 1] + k] + p[3 * ix[t + 2] + k]) / 3);
      worst = Math.max(worst, d(c[0], c[1], c[2]));
    }
  }
  return worst;
}
