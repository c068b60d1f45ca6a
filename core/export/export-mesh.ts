/**
 * One entry for every output format: picks the writer by format name, and the format by a file
 * extension. glTF (GLB or JSON) carries LODs, the material, provenance and the compression options;
 * PLY, STL and OBJ hold the base level only (the caller says so in its warnings when LODs exist).
 */
import type { MeshData } from '../types.js';
import { FieldkilnError } from '../types.js';
import { writeGlb, type WriteGlbOptions } from './write-glb.js';
import { writeGltf } from './write-gltf.js';
import { writeObj } from './write-obj.js';
import { writePly } from './write-ply.js';
import { writeStl } from './write-stl.js';

/** Output formats, by file extension. */
export type ExportFormat = 'glb' | 'gltf' | 'ply' | 'stl' | 'obj';
export const EXPORT_FORMATS: readonly ExportFormat[] = ['glb', 'gltf', 'ply', 'stl', 'obj'];

/** True for formats that hold LODs, the material and the compression options. */
export function isGltfFormat(format: ExportFormat): boolean {
  return format === 'glb' || format === 'gltf';
}

/**
 * The format a file extension names (`.glb`, `.gltf`, `.ply`, `.stl`, `.obj`, any case, with or
 * without the dot), or undefined.
 */
export function formatFromExtension(ext: string): ExportFormat | undefined {
  const e = ext.toLowerCase().replace(/^\./, '');
  return (EXPORT_FORMATS as readonly string[]).includes(e) ? (e as ExportFormat) : undefined;
}

/**
 * Serializes `mesh` (and, for glTF, its LODs) in `format`.
 * @example
 * const bytes = await exportMesh('ply', mesh);
 */
export async function exportMesh(format: ExportFormat, mesh: MeshData, options: WriteGlbOptions = {}): Promise<Uint8Array> {
  const comment = provenanceLines(options.extras);
  switch (format) {
    case 'glb':
      return writeGlb(mesh, options);
    case 'gltf':
      return writeGltf(mesh, options);
    case 'ply':
      return writePly(mesh, comment);
    case 'stl':
      return writeStl(mesh);
    case 'obj':
      return writeObj(mesh, options.name, comment);
    default:
      throw new FieldkilnError(`unknown output format '${String(format)}'; use one of: ${EXPORT_FORMATS.join(', ')}`);
  }
}

/** Provenance as comment lines for formats without structured metadata. */
function provenanceLines(extras: Record<string, unknown> | undefined): string[] {
  if (!extras) return [];
  return Object.entries(extras).map(([k, v]) => `${k}: ${JSON.stringify(v)}`);
}
