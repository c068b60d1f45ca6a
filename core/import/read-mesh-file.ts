/**
 * One entry for reading any mesh file Fieldkiln writes or checks: GLB / glTF (every node's mesh),
 * PLY, STL, OBJ (one mesh each), chosen by the file's extension. Core gets bytes, not paths: the
 * caller reads the file (and, for `.gltf`, its external buffers).
 */
import { FieldkilnError } from '../types.js';
import { readGltfMeshes, type NamedMesh, type ReadGltfOptions } from './read-gltf-meshes.js';
import { readObj } from './read-obj.js';
import { readPly } from './read-ply.js';
import { readStl } from './read-stl.js';

/** Mesh file formats `fieldkiln check` reads, by file extension. */
export type MeshFileFormat = 'glb' | 'gltf' | 'ply' | 'stl' | 'obj';
export const MESH_FILE_FORMATS: readonly MeshFileFormat[] = ['glb', 'gltf', 'ply', 'stl', 'obj'];

/**
 * The meshes in a file of `format`, each named (`name`: the node for glTF, the format otherwise).
 * @throws FieldkilnError when the bytes are not a valid file of that format.
 * @example
 * const parts = await readMeshFile('stl', bytes);
 */
export async function readMeshFile(format: MeshFileFormat, bytes: Uint8Array, options: ReadGltfOptions = {}): Promise<NamedMesh[]> {
  switch (format) {
    case 'glb':
    case 'gltf':
      return readGltfMeshes(bytes, options);
    case 'ply':
      return [{ name: 'ply', mesh: readPly(bytes) }];
    case 'stl':
      return [{ name: 'stl', mesh: readStl(bytes) }];
    case 'obj':
      return [{ name: 'obj', mesh: readObj(bytes) }];
    default:
      throw new FieldkilnError(`unknown mesh format '${String(format)}'; use one of: ${MESH_FILE_FORMATS.join(', ')}`);
  }
}
