/**
 * Texture baking from the field itself onto a low-poly mesh: a base-color texture and a
 * tangent-space normal map that carry the detail decimation removed. Unlike a bake from a
 * high-poly mesh, every texel asks the field.
 *
 * 1. UV layout (`unwrap-mesh.ts`, xatlas), MikkTSpace tangents (`compute-tangents.ts`), stretch
 *    (`measure-uv-stretch.ts`).
 * 2. Each texel's point on the low-poly surface (`rasterize-atlas.ts`; texels just outside a chart
 *    take the chart's nearest edge point) and a direction to search along: the interpolated
 *    area-weighted normal of the low-poly mesh, computed before the split at UV seams so it is
 *    continuous across them. Not the exported vertex normals: those are the field's gradient at
 *    each vertex, and a vertex on the wall of a groove the decimation removed has its normal
 *    tilted far from the low-poly surface's, which bent the rays and drew 1 cm grooves wavy.
 * 3. That point moved onto the field's surface along that direction (`project-to-surface.ts`:
 *    Newton steps for an SDF, a short bracketing search for density and occupancy), within
 *    `searchDistance`.
 * 4. There, the field's color (linear RGB, written sRGB-encoded as glTF wants of base color) and
 *    its normal (`estimate-field-normals.ts`), written in the tangent frame the renderer rebuilds
 *    from the exported attributes: N = normalize(interpolated NORMAL), T = normalize(interpolated
 *    TANGENT.xyz), B = normalize(interpolated w·normalize(cross(NORMAL, TANGENT.xyz))), which is how
 *    three.js builds it (its vertex shader normalizes the per-vertex bitangent, the fragment shader
 *    normalizes all three) and matches MikkTSpace's own per-pixel frame up to the normalization of
 *    interpolated vectors. The stored vector m solves [T B N]·m = n_field (the frame need not be
 *    orthogonal), normalized, and is encoded as round((m + 1)·127.5), glTF's mapping of [−1, 1]
 *    to the normal texture's values.
 * 5. Empty texels are filled outward from the baked ones (`dilate-texels.ts`) so mipmaps do not
 *    bleed background into charts; both images are encoded as PNG (`encode-png.ts`).
 *
 * Notes from trying, on the rendering test (`test/core/texture/bake-textures.render.test.ts`: grooved
 * column, 2 000 triangles, six views; the figure is how many times smaller the baked mesh's mean
 * pixel difference to the full mesh is than the vertex-colored mesh's):
 * - Search direction: exported vertex normals 2.41, area-weighted low-poly normals 2.75 (both
 *   counting silhouette pixels; the test now leaves a 2-pixel band along silhouettes out: 3.14).
 * - Texture edge 512 / 1024 / 2048: 3.00 / 3.14 / 3.13. What remains is parallax (the grooves are
 *   5–6 mm deep and a normal map cannot shift them with the view) and the reference's own 2 mm
 *   cells; more texels do not help.
 * - Charts capped at area/64 or xatlas' defaults: 3.14 / 3.10. Exporting the area-weighted normals
 *   as NORMAL instead of the field's: 3.15; the field's stay (the untextured levels use them too).
 *
 * Every field query is batched: texels go through steps 3–4 in batches of `batchTexels`, each
 * Newton step, the search, the gradient (6 points per texel) and the color being one call each.
 * Per texel that is about 3–6 points for an SDF's projection (9 + ~4 for the search), 6 for the
 * normal and 1 for the color. Measured (2-core machine, whole texture stage): grooved column
 * recipe, 2 000 triangles, 1024²: 4.4 s, 545 842 texels, 5.6 M points (10 per texel); 2048²: 11.0 s,
 * 19.9 M points; the shared sphere fixture (ONNX), 1024²: 10.1 s, 5.1 M points.
 */
import type { Field } from '../fields/field.js';
import type { MeshData } from '../types.js';
import { FieldkilnError, throwIfAborted } from '../types.js';
import { linearToSrgbByte } from '../color/srgb.js';
import { unwrapMesh, type UnwrapOptions, type UvAtlasModule } from './unwrap-mesh.js';
import { computeTangents } from './compute-tangents.js';
import { measureUvStretch } from './measure-uv-stretch.js';
import { rasterizeAtlas, TEXEL_EMPTY } from './rasterize-atlas.js';
import { projectToSurface } from './project-to-surface.js';
import { estimateFieldNormals } from './estimate-field-normals.js';
import { dilateTexels } from './dilate-texels.js';
import { areaWeightedNormals } from '../normals/area-weighted-normals.js';
import { encodePng, type DeflateFn } from './encode-png.js';

const NAME = 'bakeTextures';

/** Options for {@link bakeTextures}. */
export interface BakeTexturesOptions {
  /** Edge of the square textures, texels: a power of two from {@link TEXTURE_DEFAULTS}.minSize to .maxSize. Required. */
  size: number;
  /** xatlas (watlas after `Initialize()`), from the host. Required. */
  unwrapper: UvAtlasModule;
  /** Iso-level, field units. Required. */
  level: number;
  /** The sampling cell, metres: sets the gradient step (half a cell, as the vertex normals) and the projection tolerance. Required. */
  cellSize: number;
  /** How far from the low-poly surface the field's surface is looked for, metres. Required. */
  searchDistance: number;
  /** zlib compressor for the PNGs (e.g. Node's `zlib.deflateSync`). Default: stored, uncompressed. */
  deflate?: DeflateFn;
  /** Texels per batch of field queries. Default: {@link TEXTURE_DEFAULTS}.batchTexels. */
  batchTexels?: number;
  /** UV layout options (padding, chart size). */
  unwrap?: Omit<UnwrapOptions, 'size'>;
  signal?: AbortSignal;
  /** 0..1 within the bake. */
  onProgress?: (fraction: number) => void;
}

/** Defaults and limits of {@link bakeTextures}. */
export const TEXTURE_DEFAULTS = {
  minSize: 64,
  maxSize: 4096,
  /**
   * Most triangles the UV layout takes. xatlas runs synchronously (it blocks the thread it runs on):
   * about 5 s for 50 000 triangles on our 2-core machine (see `unwrap-mesh.ts`), and the whole texture
   * stage took 20 s at 100 000. Texture budgets for game props sit well below this; larger meshes need --budget.
   */
  maxTriangles: 50_000,
  batchTexels: 65_536,
  /** Gradient step in sampling cells: the same as the vertex normals' (FIELD_GRADIENT_NORMALS_DEFAULTS.stepCells). */
  normalStepCells: 0.5,
  /** Projection tolerance in sampling cells. Our choice: far below a texel at any size we allow. */
  toleranceCells: 1e-3,
};

/** What {@link bakeTextures} reports (the pipeline's `texture.*`). */
export interface TextureReport {
  /** Texture edge, texels. */
  size: number;
  /** Charts in the UV layout. */
  charts: number;
  /** Fraction (0..1) of texels whose centre lies inside a chart. */
  coverage: number;
  /** Sander et al. 2001 L2 stretch of the layout, 1 = none. */
  stretch: number;
  /** Largest stretch of any triangle in any direction (Sander et al. L∞), 1 = none. */
  stretchMax: number;
  /** Texels between charts. */
  padding: number;
  /** Vertices after splitting at chart seams. */
  vertices: number;
  /** Texels baked from the field: covered ones plus border texels. */
  bakedTexels: number;
  /** Baked texels whose surface point was not found within the search distance (baked at the low-poly point). */
  unprojectedTexels: number;
  /** Baked texels whose field gradient was unusable (they keep the vertex normal). */
  normalFallbacks: number;
  /** Points sent to the field. */
  evaluations: number;
  /** Wall time of the whole texture stage, seconds. */
  bakeSeconds: number;
}

/** Result of {@link bakeTextures}. */
export interface BakeTexturesResult {
  /** The mesh split at chart seams (positions, normals, colors copied). */
  mesh: MeshData;
  /** TEXCOORD_0: 2 floats per vertex, 0..1, v down the image. */
  uvs: Float32Array;
  /** TANGENT: 4 floats per vertex (MikkTSpace, glTF handedness). */
  tangents: Float32Array;
  /** sRGB RGB bytes, size² texels (row 0 at v = 0); absent when the field has no color. */
  baseColor?: Uint8Array;
  /** Tangent-space normals as RGB bytes, size² texels. */
  normalMap: Uint8Array;
  baseColorPng?: Uint8Array;
  normalPng: Uint8Array;
  /** Per texel: 1 where baked from the field (before dilation). */
  baked: Uint8Array;
  report: TextureReport;
}

/**
 * Bakes base color and normal textures of `field` onto `mesh` (see the file comment).
 * @param mesh indexed, with unit vertex normals (3 floats per vertex).
 * @example
 * await watlas.Initialize();
 * const t = await bakeTextures(field, lowPoly, { size: 1024, unwrapper: watlas, level: 0, cellSize: 0.002, searchDistance: 0.01 });
 */
export async function bakeTextures(field: Field, mesh: MeshData, options: BakeTexturesOptions): Promise<BakeTexturesResult> {
  const t0 = performance.now();
  const { size, level, cellSize } = options;
  if (!Number.isInteger(size) || size < TEXTURE_DEFAULTS.minSize || size > TEXTURE_DEFAULTS.maxSize || (size & (size - 1)) !== 0) {
    throw new Error(`${NAME}: size must be a power of two from ${TEXTURE_DEFAULTS.minSize} to ${TEXTURE_DEFAULTS.maxSize} (got ${size})`);
  }
  if (!mesh.normals || mesh.normals.length !== mesh.positions.length) throw new Error(`${NAME}: the mesh needs vertex normals`);
  if (!(cellSize > 0) || !(options.searchDistance > 0)) throw new Error(`${NAME}: cellSize and searchDistance must be positive metres`);
  const triangles = mesh.indices.length / 3;
  if (triangles > TEXTURE_DEFAULTS.maxTriangles) {
    throw new FieldkilnError(
      `texture baking lays out UVs for at most ${TEXTURE_DEFAULTS.maxTriangles} triangles and this mesh has ${triangles}; ` +
        `give a triangle budget (--budget) of at most ${TEXTURE_DEFAULTS.maxTriangles}`,
    );
  }
  const progress = options.onProgress ?? (() => {});
  const batch = Math.max(1, options.batchTexels ?? TEXTURE_DEFAULTS.batchTexels);

  const un = unwrapMesh(mesh, options.unwrapper, { size, ...options.unwrap });
  const m = un.mesh;
  const { uvs } = un;
  const P = m.positions, Nv = m.normals!, idx = m.indices;
  // Search directions: area-weighted normals of the unsplit mesh, carried to the split vertices.
  const smooth = areaWeightedNormals(mesh.positions, mesh.indices);
  const Rv = new Float32Array(P.length);
  for (let v = 0; v < un.xref.length; v++) Rv.set(smooth.subarray(3 * un.xref[v], 3 * un.xref[v] + 3), 3 * v);
  const tangents = computeTangents(P, Nv, uvs, idx);
  const stretch = measureUvStretch(P, uvs, idx);
  const raster = rasterizeAtlas(uvs, idx, size);
  progress(0.05);

  // Per vertex: the renderer's per-vertex bitangent, w·normalize(cross(N, T)).
  const V = P.length / 3;
  const Bv = new Float32Array(3 * V);
  for (let v = 0; v < V; v++) {
    const nx = Nv[3 * v], ny = Nv[3 * v + 1], nz = Nv[3 * v + 2];
    const tx = tangents[4 * v], ty = tangents[4 * v + 1], tz = tangents[4 * v + 2], w = tangents[4 * v + 3];
    const bx = ny * tz - nz * ty, by = nz * tx - nx * tz, bz = nx * ty - ny * tx;
    const len = Math.hypot(bx, by, bz) || 1;
    Bv[3 * v] = (w * bx) / len;
    Bv[3 * v + 1] = (w * by) / len;
    Bv[3 * v + 2] = (w * bz) / len;
  }

  const N = size * size;
  const texels = new Uint32Array(raster.covered + raster.border);
  for (let i = 0, k = 0; i < N; i++) if (raster.kind[i] !== TEXEL_EMPTY) texels[k++] = i;
  const colored = field.hasColor && !!field.evaluateColor;
  const baseColor = colored ? new Uint8Array(3 * N) : undefined;
  const normalMap = new Uint8Array(3 * N);
  const baked = new Uint8Array(N);
  let unprojectedTexels = 0;
  let normalFallbacks = 0;
  let evaluations = 0;
  const step = TEXTURE_DEFAULTS.normalStepCells * cellSize;
  const tolerance = TEXTURE_DEFAULTS.toleranceCells * cellSize;

  for (let start = 0; start < texels.length; start += batch) {
    throwIfAborted(options.signal);
    const chunk = texels.subarray(start, Math.min(texels.length, start + batch));
    const n = chunk.length;
    const pts = new Float32Array(3 * n);
    const dirs = new Float32Array(3 * n);
    for (let j = 0; j < n; j++) {
      const texel = chunk[j];
      const t = raster.triangle[texel];
      const w1 = raster.bary[2 * texel], w2 = raster.bary[2 * texel + 1], w0 = 1 - w1 - w2;
      const a = idx[3 * t], b = idx[3 * t + 1], c = idx[3 * t + 2];
      let nx = 0, ny = 0, nz = 0;
      for (let k = 0; k < 3; k++) pts[3 * j + k] = w0 * P[3 * a + k] + w1 * P[3 * b + k] + w2 * P[3 * c + k];
      nx = w0 * Rv[3 * a] + w1 * Rv[3 * b] + w2 * Rv[3 * c];
      ny = w0 * Rv[3 * a + 1] + w1 * Rv[3 * b + 1] + w2 * Rv[3 * c + 1];
      nz = w0 * Rv[3 * a + 2] + w1 * Rv[3 * b + 2] + w2 * Rv[3 * c + 2];
      const len = Math.hypot(nx, ny, nz) || 1;
      dirs[3 * j] = nx / len;
      dirs[3 * j + 1] = ny / len;
      dirs[3 * j + 2] = nz / len;
    }
    const proj = await projectToSurface(field, pts, dirs, { level, maxDistance: options.searchDistance, tolerance, signal: options.signal });
    evaluations += proj.evaluations;
    const fieldNormals = await estimateFieldNormals(field, proj.points, dirs, { level, step, signal: options.signal });
    evaluations += fieldNormals.evaluations;
    normalFallbacks += fieldNormals.fallbacks;
    let rgb: Float32Array | undefined;
    if (colored) {
      rgb = await field.evaluateColor!(proj.points, options.signal);
      evaluations += n;
    }
    for (let j = 0; j < n; j++) {
      const texel = chunk[j];
      if (!proj.found[j]) unprojectedTexels++;
      baked[texel] = 1;
      if (baseColor && rgb) for (let k = 0; k < 3; k++) baseColor[3 * texel + k] = linearToSrgbByte(Number.isFinite(rgb[3 * j + k]) ? rgb[3 * j + k] : 0);
      encodeNormal(normalMap, texel, raster.triangle[texel], raster.bary[2 * texel], raster.bary[2 * texel + 1], idx, Nv, tangents, Bv, fieldNormals.normals, j);
    }
    progress(0.05 + (0.85 * Math.min(texels.length, start + batch)) / texels.length);
  }

  if (texels.length === 0) {
    // Nothing to bake from: a flat normal map and a neutral base color.
    for (let i = 0; i < N; i++) normalMap.set([128, 128, 255], 3 * i);
    baseColor?.fill(204);
  } else {
    dilateTexels(normalMap, 3, size, size, baked);
    if (baseColor) dilateTexels(baseColor, 3, size, size, baked);
  }
  progress(0.92);
  const normalPng = await encodePng(normalMap, size, size, 3, { deflate: options.deflate });
  const baseColorPng = baseColor ? await encodePng(baseColor, size, size, 3, { deflate: options.deflate }) : undefined;
  progress(1);

  const report: TextureReport = {
    size,
    charts: un.charts,
    coverage: round(raster.covered / N, 4),
    stretch: round(stretch.l2, 4),
    stretchMax: round(stretch.max, 3),
    padding: un.padding,
    vertices: V,
    bakedTexels: texels.length,
    unprojectedTexels,
    normalFallbacks,
    evaluations,
    bakeSeconds: Math.round(performance.now() - t0) / 1000,
  };
  return { mesh: m, uvs, tangents, baseColor, normalMap, baseColorPng, normalPng, baked, report };
}

/**
 * Writes the field normal `fn[j]` into `out` at `texel`, in the frame the renderer builds at that
 * point of triangle `t` (see the file comment, step 4).
 */
function encodeNormal(
  out: Uint8Array,
  texel: number,
  t: number,
  w1: number,
  w2: number,
  idx: Uint32Array,
  Nv: Float32Array,
  tangents: Float32Array,
  Bv: Float32Array,
  fn: Float32Array,
  j: number,
): void {
  const w0 = 1 - w1 - w2;
  const a = idx[3 * t], b = idx[3 * t + 1], c = idx[3 * t + 2];
  const lerp3 = (arr: Float32Array, stride: number, k: number) => w0 * arr[stride * a + k] + w1 * arr[stride * b + k] + w2 * arr[stride * c + k];
  const N = unit(lerp3(Nv, 3, 0), lerp3(Nv, 3, 1), lerp3(Nv, 3, 2));
  const T = unit(lerp3(tangents, 4, 0), lerp3(tangents, 4, 1), lerp3(tangents, 4, 2));
  const B = unit(lerp3(Bv, 3, 0), lerp3(Bv, 3, 1), lerp3(Bv, 3, 2));
  const f = [fn[3 * j], fn[3 * j + 1], fn[3 * j + 2]];
  // m = [T B N]⁻¹ f, with the inverse's rows B×N, N×T, T×B over det = T·(B×N).
  const BxN = cross(B, N), NxT = cross(N, T), TxB = cross(T, B);
  const det = dot(T, BxN);
  let mx = 0, my = 0, mz = 1;
  if (Math.abs(det) > 1e-6) {
    mx = dot(BxN, f) / det;
    my = dot(NxT, f) / det;
    mz = dot(TxB, f) / det;
    const len = Math.hypot(mx, my, mz);
    if (len > 0 && Number.isFinite(len)) {
      mx /= len;
      my /= len;
      mz /= len;
    } else [mx, my, mz] = [0, 0, 1];
  }
  out[3 * texel] = toByte(mx);
  out[3 * texel + 1] = toByte(my);
  out[3 * texel + 2] = toByte(mz);
}

function toByte(x: number): number {
  return Math.max(0, Math.min(255, Math.round((x + 1) * 127.5)));
}

function unit(x: number, y: number, z: number): [number, number, number] {
  const len = Math.hypot(x, y, z) || 1;
  return [x / len, y / len, z / len];
}

function cross(u: number[], v: number[]): [number, number, number] {
  return [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
}

function dot(u: number[], v: number[]): number {
  return u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
}

function round(x: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}
