/**
 * Writes a mesh as a binary glTF 2.0 file (GLB) with glTF-Transform: POSITION, NORMAL, optional
 * COLOR_0 (linear RGB floats, as the glTF 2.0 spec requires of vertex colors), uint32 indices, one
 * mesh under one node, metres, +Y up. Nothing time-dependent is written, so the same mesh and
 * options give the same bytes.
 */
import { Document, WebIO } from '@gltf-transform/core';
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';

/** Options for {@link writeGlb}. */
export interface WriteGlbOptions {
  /** Name of the node and mesh. Default: 'fieldkiln-mesh'. */
  name?: string;
  /** Stored in the asset's `extras` (provenance: source file, hash, options). */
  extras?: Record<string, unknown>;
}

/** Builds the glTF document for `mesh` (normals required). */
export function buildDocument(mesh: MeshData, options: WriteGlbOptions = {}): Document {
  if (!mesh.normals) throw new Error('writeGlb: mesh has no normals');
  const name = options.name ?? 'fieldkiln-mesh';
  const doc = new Document();
  doc.getRoot().getAsset().generator = `Fieldkiln ${FIELDKILN_VERSION}`;
  if (options.extras) doc.getRoot().getAsset().extras = { fieldkiln: options.extras };
  const buffer = doc.createBuffer();
  const prim = doc
    .createPrimitive()
    .setAttribute('POSITION', doc.createAccessor('POSITION').setType('VEC3').setArray(mesh.positions).setBuffer(buffer))
    .setAttribute('NORMAL', doc.createAccessor('NORMAL').setType('VEC3').setArray(mesh.normals).setBuffer(buffer))
    .setIndices(doc.createAccessor('indices').setType('SCALAR').setArray(mesh.indices).setBuffer(buffer));
  if (mesh.colors) prim.setAttribute('COLOR_0', doc.createAccessor('COLOR_0').setType('VEC3').setArray(mesh.colors).setBuffer(buffer));
  const material = doc.createMaterial('fieldkiln-vertex-color').setBaseColorFactor([1, 1, 1, 1]).setMetallicFactor(0).setRoughnessFactor(0.8);
  prim.setMaterial(material);
  const gmesh = doc.createMesh(name).addPrimitive(prim);
  const node = doc.createNode(name).setMesh(gmesh);
  doc.createScene('fieldkiln').addChild(node);
  doc.getRoot().setDefaultScene(doc.getRoot().listScenes()[0]);
  return doc;
}

/** Serializes `mesh` to GLB bytes. */
export async function writeGlb(mesh: MeshData, options: WriteGlbOptions = {}): Promise<Uint8Array> {
  return new WebIO().writeBinary(buildDocument(mesh, options));
}
