/**
 * Drops connected parts whose surface area is below a fraction of the largest part's area: the
 * floaters that reconstructed density fields are full of. Parts are triangles joined through
 * shared vertices (`find-components.ts`).
 */
import type { MeshData } from '../types.js';
import { findComponents } from '../checks/find-components.js';
import { triangleArea } from '../checks/find-degenerate-triangles.js';
import { compactMesh } from './compact-mesh.js';

/**
 * Parts below this fraction of the largest part's area are mentioned in a warning when the user
 * did not ask for removal. Our own choice (1 %): a floater that size is visible but easily missed.
 */
export const SMALL_PART_WARNING_FRACTION = 0.01;

/** What {@link removeSmallParts} dropped. */
export interface SmallPartsRemoved {
  /** Parts dropped. */
  parts: number;
  /** Triangles dropped. */
  triangles: number;
  /** Their area, m². */
  area: number;
  /** Parts kept. */
  partsKept: number;
}

/**
 * Areas of the connected parts of `mesh`, m², in order of each part's first triangle, and each
 * triangle's part.
 */
export function partAreas(mesh: MeshData): { areas: Float64Array; triangles: Uint32Array; triPart: Uint32Array } {
  const { positions, indices } = mesh;
  const { triComponent, count } = findComponents(indices, positions.length / 3);
  const areas = new Float64Array(count);
  const triangles = new Uint32Array(count);
  for (let t = 0; t < indices.length / 3; t++) {
    const c = triComponent[t];
    areas[c] += triangleArea(positions, indices[3 * t], indices[3 * t + 1], indices[3 * t + 2]);
    triangles[c]++;
  }
  return { areas, triangles, triPart: triComponent };
}

/**
 * Keeps the parts of `mesh` whose area is at least `minFraction` × the largest part's area.
 * @param minFraction 0..1; 0 keeps everything.
 * @returns the compacted mesh (normals and colors carried) and what was removed.
 * @example
 * const { mesh: clean, removed } = removeSmallParts(mesh, 0.01);
 */
export function removeSmallParts(mesh: MeshData, minFraction: number): { mesh: MeshData; removed: SmallPartsRemoved } {
  if (!(minFraction >= 0 && minFraction <= 1)) throw new Error(`removeSmallParts: minFraction must be within 0..1 (got ${minFraction})`);
  const { areas, triangles, triPart } = partAreas(mesh);
  let largest = 0;
  for (const a of areas) if (a > largest) largest = a;
  const threshold = minFraction * largest;
  const keep = new Uint8Array(areas.length);
  const removed: SmallPartsRemoved = { parts: 0, triangles: 0, area: 0, partsKept: 0 };
  for (let c = 0; c < areas.length; c++) {
    if (areas[c] >= threshold) {
      keep[c] = 1;
      removed.partsKept++;
    } else {
      removed.parts++;
      removed.triangles += triangles[c];
      removed.area += areas[c];
    }
  }
  if (removed.parts === 0) return { mesh, removed };
  const out: number[] = [];
  const idx = mesh.indices;
  for (let t = 0; t < idx.length / 3; t++) if (keep[triPart[t]]) out.push(idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]);
  return { mesh: compactMesh(mesh, Uint32Array.from(out)).mesh, removed };
}

/** Number of parts below `fraction` × the largest part's area (for the warning), and their total area, m². */
export function countSmallParts(mesh: MeshData, fraction = SMALL_PART_WARNING_FRACTION): { parts: number; area: number; largest: number } {
  const { areas } = partAreas(mesh);
  let largest = 0;
  for (const a of areas) if (a > largest) largest = a;
  let parts = 0;
  let area = 0;
  for (const a of areas) {
    if (a < fraction * largest) {
      parts++;
      area += a;
    }
  }
  return { parts, area, largest };
}
