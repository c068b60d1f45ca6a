/**
 * Writes meshes as glTF 2.0 JSON (`.gltf`), self-contained: the same document as the GLB
 * (`write-glb.ts`: LODs, material, provenance, quantization and meshopt options), with each
 * buffer embedded as a base64 `data:application/octet-stream` URI and each texture image as a
 * `data:image/png` URI, so one file carries everything.
 * Base64 makes the buffers a third larger; use GLB when size matters.
 */
import type { MeshData } from '../types.js';
import { buildDocument, createGltfIO, type WriteGlbOptions } from './write-glb.js';

/**
 * `.gltf` bytes (UTF-8 JSON) for `mesh` and its LODs.
 * @example
 * const bytes = await writeGltf(mesh, { lods });
 */
export async function writeGltf(mesh: MeshData, options: WriteGlbOptions = {}): Promise<Uint8Array> {
  const io = await createGltfIO();
  const { json, resources } = await io.writeJSON(buildDocument(mesh, options), { basename: 'fieldkiln' });
  for (const buffer of json.buffers ?? []) {
    if (buffer.uri && resources[buffer.uri]) buffer.uri = `data:application/octet-stream;base64,${toBase64(resources[buffer.uri])}`;
  }
  for (const image of json.images ?? []) {
    if (image.uri && resources[image.uri]) image.uri = `data:${image.mimeType ?? 'image/png'};base64,${toBase64(resources[image.uri])}`;
  }
  return new TextEncoder().encode(JSON.stringify(json, null, 2) + '\n');
}

function toBase64(bytes: Uint8Array): string {
  let s = '';
  const chunk = 0x8000;
  for (let i = 0; i < bytes.length; i += chunk) s += String.fromCharCode(...bytes.subarray(i, i + chunk));
  return btoa(s);
}
