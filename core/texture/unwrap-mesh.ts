/**
 * UV layout of a (decimated) mesh: xatlas (Young, "xatlas", github.com/jpcy/xatlas, a fork of
 * Castaño's thekla_atlas) cuts the surface into charts of little stretch, flattens each
 * (planar, orthogonal or least-squares conformal maps: Lévy et al. 2002, "Least squares conformal
 * maps for automatic texture atlas generation") and packs them into one square atlas with padding
 * between them. Vertices are split where charts meet, so each output vertex has one UV; `xref`
 * says which input vertex each came from, and positions, normals and colors are copied from it
 * (bit for bit, so a weld by exact position restores the closed surface).
 *
 * Core stays platform-free: the xatlas module comes in as an argument (`watlas`, xatlas compiled to
 * WebAssembly, which loads its .wasm through the host: the file system in Node, fetch in a browser).
 * It is synchronous; the pipeline limits the triangle count (`TEXTURE_DEFAULTS.maxTriangles` in
 * `bake-textures.ts`) so that it stays short.
 *
 * Chart options, measured (watlas 1.0.1, 2-core machine shared with other jobs; chart time +
 * pack time into 1024² or 2048²; L2 stretch after Sander et al. 2001, 1 = no stretch):
 *
 * | mesh | xatlas defaults | maxChartArea = area/16 | area/64 (chosen) |
 * |---|---|---|---|
 * | grooved column, 1 996 tris, 1024² | 233 + 161 ms, 192 charts, 1.010 | 69 + 93 ms, 198, 1.012 | 58 + 98 ms, 258, 1.006 |
 * | same, 10 000 tris, 1024² | 921 + 164 ms, 401 charts, 1.023 | 473 + 135 ms, 421, 1.023 | 289 + 133 ms, 424, 1.049 |
 * | same, 50 000 tris, 2048² | not run (minutes, see DEPENDENCIES.md §9) | 8 362 + 693 ms, 818, 1.003 | 4 288 + 641 ms, 770, 1.006 |
 * | torus, 19 998 tris, 2048² | not run | 2 903 + 1 175 ms, 315, 1.003 | 1 067 + 1 163 ms, 231, 1.001 |
 *
 * Capping a chart's area bounds how far xatlas grows each chart, which is where its time goes on
 * smooth surfaces; a sixty-fourth of the surface was fastest everywhere and the stretch stays
 * within 5% of none. Packing: `bilinear` (room for bilinear filtering around each chart), padding
 * `size / 256` texels (at least 2; common practice is a few texels at 1K), charts may rotate.
 *
 * Square atlas: xatlas packs into about `size` texels but may return a little more or less; the
 * UVs are scaled uniformly so the larger side fills `size` exactly (if xatlas overshot by more than
 * the padding allows, it packs again with the padding scaled up first, so the padding that remains
 * after scaling is still about the asked one). The result reports the padding that remains.
 *
 * UVs are glTF's: 0..1, origin at the image's top-left texel, v growing down the image. Triangles
 * keep their order and winding.
 *
 * Mirrored corners: MikkTSpace (`compute-tangents.ts`) gives a vertex one tangent per orientation of
 * its UV triangles. xatlas charts are not folded, so a vertex's triangles normally share one
 * orientation; where they do not, the vertex is split here, one copy per orientation, so each
 * vertex has one tangent frame (`mirroredSplits` counts the copies made).
 */
import type { MeshData } from '../types.js';

const NAME = 'unwrapMesh';

/** The part of one xatlas output mesh that {@link unwrapMesh} reads (watlas' `Mesh`). */
export interface UvAtlasMesh {
  getIndexArray(out: Uint32Array): boolean;
  getVertex(index: number): { uv: [number, number]; xref: number; chartIndex: number };
  readonly indexCount: number;
  readonly vertexCount: number;
}

/** The part of an xatlas atlas that {@link unwrapMesh} uses (watlas' `Atlas`). */
export interface UvAtlas {
  addMesh(decl: { vertexPositionData: Float32Array; vertexCount: number; vertexPositionStride: number; indexData: Uint32Array; indexCount: number }): void;
  computeCharts(options: { maxChartArea?: number; maxIterations?: number }): void;
  packCharts(options: { resolution?: number; padding?: number; bilinear?: boolean; texelsPerUnit?: number }): void;
  getMesh(index: number): UvAtlasMesh;
  readonly width: number;
  readonly height: number;
  readonly atlasCount: number;
  readonly chartCount: number;
  readonly texelsPerUnit: number;
  delete(): void;
}

/**
 * An xatlas module whose WebAssembly is ready: watlas after `await watlas.Initialize()`
 * (`import * as watlas from 'watlas'`), passed in by the host.
 */
export interface UvAtlasModule {
  Atlas: new () => UvAtlas;
}

/** Options for {@link unwrapMesh}. */
export interface UnwrapOptions {
  /** Edge of the square atlas, texels. Required. */
  size: number;
  /** Texels between charts. Default: size / 256, at least 2. */
  padding?: number;
  /** Largest chart, as a fraction of the mesh's area (xatlas `maxChartArea`). Default: 1/64. */
  chartAreaFraction?: number;
}

/** Defaults of {@link unwrapMesh} (see the file comment for the measurements behind them). */
export const UNWRAP_DEFAULTS = {
  chartAreaFraction: 1 / 64,
  /** Padding as a fraction of the atlas edge (common practice: a few texels at 1K). */
  paddingFraction: 1 / 256,
  minPadding: 2,
};

/** Result of {@link unwrapMesh}. */
export interface UnwrapResult {
  /** The mesh with vertices split at chart seams: positions, normals and colors copied from the input vertex `xref[v]`. */
  mesh: MeshData;
  /** 2 floats per vertex of `mesh`: glTF UVs, 0..1, v down the image. */
  uvs: Float32Array;
  /** Per vertex of `mesh`: the input vertex it came from. */
  xref: Uint32Array;
  /** Charts in the atlas. */
  charts: number;
  /** Texels between charts after the atlas was scaled to `size`. */
  padding: number;
  /** Extra vertices made where a vertex's UV triangles had both orientations. */
  mirroredSplits: number;
}

/**
 * Lays out UVs for `mesh` with xatlas (see the file comment).
 * @param mesh closed or open, indexed; 3 floats per vertex, 3 indices per triangle.
 * @param atlasModule watlas after `Initialize()`.
 * @example
 * await watlas.Initialize();
 * const { mesh: split, uvs, charts } = unwrapMesh(mesh, watlas, { size: 1024 });
 */
export function unwrapMesh(mesh: MeshData, atlasModule: UvAtlasModule, options: UnwrapOptions): UnwrapResult {
  const size = options.size;
  if (!Number.isInteger(size) || size < 8) throw new Error(`${NAME}: size must be a whole number of texels ≥ 8 (got ${size})`);
  if (!atlasModule || typeof atlasModule.Atlas !== 'function') throw new Error(`${NAME}: atlasModule must be an initialized xatlas module (watlas)`);
  const { positions, indices } = mesh;
  if (positions.length % 3 !== 0 || indices.length % 3 !== 0 || indices.length === 0) throw new Error(`${NAME}: the mesh needs 3 floats per vertex and at least one triangle`);
  const padding = Math.max(UNWRAP_DEFAULTS.minPadding, Math.round(options.padding ?? size * UNWRAP_DEFAULTS.paddingFraction));
  const fraction = options.chartAreaFraction ?? UNWRAP_DEFAULTS.chartAreaFraction;
  if (!(fraction > 0 && fraction <= 1)) throw new Error(`${NAME}: chartAreaFraction must be in (0, 1] (got ${fraction})`);

  const atlas = new atlasModule.Atlas();
  try {
    atlas.addMesh({
      vertexPositionData: positions,
      vertexCount: positions.length / 3,
      vertexPositionStride: 12,
      indexData: indices,
      indexCount: indices.length,
    });
    atlas.computeCharts({ maxChartArea: fraction * surfaceArea(positions, indices) });
    let pad = padding;
    atlas.packCharts({ resolution: size, padding: pad, bilinear: true });
    let edge = Math.max(atlas.width, atlas.height);
    if (edge > size * 1.05 || atlas.atlasCount > 1) {
      // Scaling down would thin the padding: pack again with it widened so that it survives.
      pad = Math.ceil((padding * edge) / size);
      let tpu = 0;
      for (let attempt = 0; attempt < 6; attempt++) {
        atlas.packCharts({ resolution: size, padding: pad, bilinear: true, texelsPerUnit: tpu });
        if (atlas.atlasCount === 1) break;
        tpu = atlas.texelsPerUnit * 0.8; // still more than one atlas: shrink the charts
      }
      edge = Math.max(atlas.width, atlas.height);
    }
    if (atlas.atlasCount !== 1) throw new Error(`${NAME}: xatlas packed the charts into ${atlas.atlasCount} atlases, not one`);

    const out = atlas.getMesh(0);
    if (out.indexCount !== indices.length) throw new Error(`${NAME}: xatlas returned ${out.indexCount / 3} triangles for ${indices.length / 3}`);
    const outIndices = new Uint32Array(out.indexCount);
    out.getIndexArray(outIndices);
    const V = out.vertexCount;
    const xref = new Uint32Array(V);
    const uvs = new Float32Array(2 * V);
    for (let v = 0; v < V; v++) {
      const vert = out.getVertex(v);
      xref[v] = vert.xref;
      uvs[2 * v] = vert.uv[0] / edge;
      uvs[2 * v + 1] = vert.uv[1] / edge;
    }
    const split = splitMirroredCorners(outIndices, uvs, xref);
    return {
      mesh: copyAttributes(mesh, split.xref, split.indices),
      uvs: split.uvs,
      xref: split.xref,
      charts: atlas.chartCount,
      padding: Math.floor(((pad * size) / edge) * 100) / 100,
      mirroredSplits: split.added,
    };
  } finally {
    atlas.delete();
  }
}

function surfaceArea(p: Float32Array, idx: Uint32Array): number {
  let area = 0;
  for (let t = 0; t < idx.length; t += 3) {
    const a = 3 * idx[t], b = 3 * idx[t + 1], c = 3 * idx[t + 2];
    const ux = p[b] - p[a], uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2];
    const vx = p[c] - p[a], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
    area += 0.5 * Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
  }
  return area;
}

/** Per output vertex, the input's attributes at `xref`. */
function copyAttributes(mesh: MeshData, xref: Uint32Array, indices: Uint32Array): MeshData {
  const take = (src: Float32Array) => {
    const dst = new Float32Array(3 * xref.length);
    for (let v = 0; v < xref.length; v++) {
      const s = 3 * xref[v];
      dst[3 * v] = src[s];
      dst[3 * v + 1] = src[s + 1];
      dst[3 * v + 2] = src[s + 2];
    }
    return dst;
  };
  const out: MeshData = { positions: take(mesh.positions), indices };
  if (mesh.normals) out.normals = take(mesh.normals);
  if (mesh.colors) out.colors = take(mesh.colors);
  return out;
}

/**
 * Splits each vertex whose UV triangles have both orientations: the corners of the less common
 * orientation (by count) move to a new copy of the vertex. Triangles of zero UV area have no
 * orientation and stay.
 */
function splitMirroredCorners(indices: Uint32Array, uvs: Float32Array, xref: Uint32Array) {
  const V = xref.length;
  const T = indices.length / 3;
  const orient = new Int8Array(T);
  const pos = new Int32Array(V);
  const neg = new Int32Array(V);
  for (let t = 0; t < T; t++) {
    const a = indices[3 * t], b = indices[3 * t + 1], c = indices[3 * t + 2];
    const area2 = (uvs[2 * b] - uvs[2 * a]) * (uvs[2 * c + 1] - uvs[2 * a + 1]) - (uvs[2 * c] - uvs[2 * a]) * (uvs[2 * b + 1] - uvs[2 * a + 1]);
    orient[t] = area2 > 0 ? 1 : area2 < 0 ? -1 : 0;
    for (let k = 0; k < 3; k++) {
      const v = indices[3 * t + k];
      if (orient[t] > 0) pos[v]++;
      else if (orient[t] < 0) neg[v]++;
    }
  }
  const copy = new Int32Array(V).fill(-1);
  let added = 0;
  for (let v = 0; v < V; v++) if (pos[v] > 0 && neg[v] > 0) copy[v] = V + added++;
  if (added === 0) return { indices, uvs, xref, added };
  const outIndices = Uint32Array.from(indices);
  const outUvs = new Float32Array(2 * (V + added));
  outUvs.set(uvs);
  const outXref = new Uint32Array(V + added);
  outXref.set(xref);
  for (let v = 0; v < V; v++) {
    if (copy[v] < 0) continue;
    outUvs[2 * copy[v]] = uvs[2 * v];
    outUvs[2 * copy[v] + 1] = uvs[2 * v + 1];
    outXref[copy[v]] = xref[v];
  }
  for (let t = 0; t < T; t++) {
    for (let k = 0; k < 3; k++) {
      const v = indices[3 * t + k];
      if (copy[v] < 0 || orient[t] === 0) continue;
      const minority = pos[v] >= neg[v] ? -1 : 1;
      if (orient[t] === minority) outIndices[3 * t + k] = copy[v];
    }
  }
  return { indices: outIndices, uvs: outUvs, xref: outXref, added };
}
