/**
 * Texture baking from the field: base color against the shared sphere fixture's color formula
 * (../shared/fixtures/manifest.json), the normal map read back through the tangent frame a renderer
 * rebuilds (three.js's normal_fragment_begin: normalize(vTangent), normalize(vBitangent), normalize(vNormal);
 * glTF 2.0: bitangent = cross(normal, tangent.xyz)·w) against the analytic sphere normal, and the
 * limits and errors.
 */
import { deflateSync } from 'node:zlib';
import * as watlas from 'watlas';
import { beforeAll, describe, expect, test } from 'vitest';
import { bakeTextures, TEXTURE_DEFAULTS, type BakeTexturesResult } from '../../../core/texture/bake-textures.js';
import { rasterizeAtlas, TEXEL_COVERED } from '../../../core/texture/rasterize-atlas.js';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import { srgbToLinear } from '../../../core/color/srgb.js';
import { FieldkilnError, type MeshData } from '../../../core/types.js';
import type { Field } from '../../../core/fields/field.js';
import { openField } from '../../../app/fields/open-field.js';
import { fnField } from '../../helpers/analytic-fields.js';
import { fixturePath, hasFixtures, loadManifest } from '../../helpers/fixtures.js';

beforeAll(async () => {
  await watlas.Initialize();
});

/** The manifest's height gradient: s = clamp((y − y0)/(y1 − y0), 0, 1); rgb = color0·(1 − s) + color1·s (linear). */
function heightGradient(spec: { y0: number; y1: number; color0: number[]; color1: number[] }) {
  return (x: number, y: number, z: number): [number, number, number] => {
    const s = Math.min(1, Math.max(0, (y - spec.y0) / (spec.y1 - spec.y0)));
    return [0, 1, 2].map((k) => spec.color0[k] * (1 - s) + spec.color1[k] * s) as [number, number, number];
  };
}

/** For every covered texel: the point of the low-poly surface it stands for, and its triangle and barycentrics. */
function texelPoints(t: BakeTexturesResult, size: number) {
  const raster = rasterizeAtlas(t.uvs, t.mesh.indices, size);
  const out: { texel: number; p: number[]; tri: number; w: number[] }[] = [];
  for (let texel = 0; texel < size * size; texel++) {
    if (raster.kind[texel] !== TEXEL_COVERED) continue;
    const tri = raster.triangle[texel];
    const w1 = raster.bary[2 * texel], w2 = raster.bary[2 * texel + 1];
    const w = [1 - w1 - w2, w1, w2];
    const p = [0, 1, 2].map((k) => w.reduce((s, wi, j) => s + wi * t.mesh.positions[3 * t.mesh.indices[3 * tri + j] + k], 0));
    out.push({ texel, p, tri, w });
  }
  return out;
}

/** Mean |texture − formula| per channel over covered texels, in sRGB bytes and in linear units; the point is projected onto the true sphere. */
function colorError(t: BakeTexturesResult, size: number, r: number, color: (x: number, y: number, z: number) => [number, number, number]) {
  let bytes = 0, linear = 0, n = 0;
  for (const { texel, p } of texelPoints(t, size)) {
    const len = Math.hypot(p[0], p[1], p[2]);
    const want = color(...((p.map((x) => (x * r) / len)) as [number, number, number]));
    for (let k = 0; k < 3; k++) {
      const got = t.baseColor![3 * texel + k];
      const wantLinear = want[k];
      const wantSrgb = wantLinear <= 0.0031308 ? 12.92 * wantLinear : 1.055 * Math.pow(wantLinear, 1 / 2.4) - 0.055; // IEC 61966-2-1
      bytes += Math.abs(got - 255 * wantSrgb);
      linear += Math.abs(srgbToLinear(got / 255) - wantLinear);
      n++;
    }
  }
  return { bytes: bytes / n, linear: (linear / n) * 255, texels: n / 3 };
}

describe.skipIf(!hasFixtures)('the shared sphere fixture (neural SDF with color)', () => {
  test('base color matches the manifest formula within 2/255 on average over texels', async () => {
    const fx = loadManifest().fixtures.find((f) => f.id === 'sphere_sdf')!;
    const field = await openField(fixturePath(fx.file));
    try {
      const r = await bakeField(field, { depth: 6, budget: 1500, texture: 256, unwrapper: watlas, skipExport: true });
      const t = r.textures!;
      expect(r.report.texture!.size).toBe(256);
      const spec = fx.color!.spec as { y0: number; y1: number; color0: number[]; color1: number[] };
      const err = colorError(t, 256, (fx.shape as { radius: number }).radius, heightGradient(spec));
      expect(err.texels).toBeGreaterThan(0.3 * 256 * 256);
      // The criterion: within 2/255 on average, in the texture's own units (sRGB bytes) and in linear
      // units. The network itself is off by 0.0064 (1.6/255) on average on its surface (manifest fit.color_on_surface).
      expect(err.bytes, JSON.stringify(err)).toBeLessThanOrEqual(2);
      expect(err.linear, JSON.stringify(err)).toBeLessThanOrEqual(2);
    } finally {
      await field.dispose?.();
    }
  });
});

describe('an analytic sphere (SDF and density) with the same color formula', () => {
  const spec = { y0: -0.5, y1: 0.5, color0: [0.1, 0.25, 0.85], color1: [0.95, 0.55, 0.1] };
  const bounds = [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75] as [number, number, number, number, number, number];
  const sdf = fnField((x, y, z) => Math.hypot(x, y, z) - 0.5, bounds, { color: heightGradient(spec) });
  const density = fnField((x, y, z) => 1 - Math.hypot(x, y, z), bounds, { kind: 'density', level: 0.5, color: heightGradient(spec) });

  async function bake(field: Field, size = 256) {
    const r = await bakeField(field, { depth: 6, budget: 1000, texture: size, unwrapper: watlas, skipExport: true, level: field.kind === 'density' ? 0.5 : undefined });
    return r;
  }

  for (const [name, field] of [['sdf', sdf], ['density', density]] as const) {
    test(`${name}: base color within rounding of the formula (0.6/255 in bytes)`, async () => {
      const r = await bake(field);
      const err = colorError(r.textures!, 256, 0.5, heightGradient(spec));
      // Only rounding to bytes (≤ 0.5) and float32 positions remain.
      expect(err.bytes).toBeLessThan(0.6);
      expect(r.report.texture!.unprojectedTexels).toBe(0);
    });

    test(`${name}: the normal map, read through the renderer's tangent frame, gives the sphere's normal (mean < 0.5°)`, async () => {
      const r = await bake(field);
      const t = r.textures!;
      const { positions: P, normals: N, indices: I } = t.mesh;
      let sum = 0, worst = 0, n = 0;
      for (const { texel, p, tri, w } of texelPoints(t, 256)) {
        const lerp = (arr: Float32Array, stride: number, k: number) => w.reduce((s, wi, j) => s + wi * arr[stride * I[3 * tri + j] + k], 0);
        const unit = (v: number[]) => v.map((x) => x / Math.hypot(v[0], v[1], v[2]));
        const cross = (a: number[], b: number[]) => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
        // Per vertex, as three's vertex shader: bitangent = normalize(cross(normal, tangent) · w).
        const bit = new Float32Array(9);
        for (let j = 0; j < 3; j++) {
          const v = I[3 * tri + j];
          const b = unit(cross([N![3 * v], N![3 * v + 1], N![3 * v + 2]], [t.tangents[4 * v], t.tangents[4 * v + 1], t.tangents[4 * v + 2]]));
          bit.set(b.map((x) => x * t.tangents[4 * v + 3]), 3 * j);
        }
        const Nf = unit([0, 1, 2].map((k) => lerp(N!, 3, k)));
        const Tf = unit([0, 1, 2].map((k) => lerp(t.tangents, 4, k)));
        const Bf = unit([0, 1, 2].map((k) => w.reduce((s, wi, j) => s + wi * bit[3 * j + k], 0)));
        // glTF normal texture: value·2 − 1 (three: texture2D(normalMap).xyz * 2.0 − 1.0), then normalize(TBN · m).
        const m = [0, 1, 2].map((k) => (t.normalMap[3 * texel + k] / 255) * 2 - 1);
        const got = unit([0, 1, 2].map((k) => Tf[k] * m[0] + Bf[k] * m[1] + Nf[k] * m[2]));
        const want = unit(p);
        const deg = (Math.acos(Math.min(1, got[0] * want[0] + got[1] * want[1] + got[2] * want[2])) * 180) / Math.PI;
        sum += deg;
        worst = Math.max(worst, deg);
        n++;
      }
      // 8-bit components: 0 encodes as 128, which reads back as +1/255 (glTF's value·2 − 1), so a normal
      // along N reads 0.32° off (√2/255 rad); measured mean 0.318°, worst 0.323°.
      expect(sum / n).toBeLessThan(0.5);
      expect(worst).toBeLessThan(1);
    });
  }

  test('the report has the promised figures, and the same field gives the same bytes', async () => {
    const a = await bake(sdf, 128);
    const b = await bake(sdf, 128);
    const tr = a.report.texture!;
    expect(tr.size).toBe(128);
    expect(tr.charts).toBeGreaterThanOrEqual(1);
    expect(tr.coverage).toBeGreaterThan(0.2);
    expect(tr.coverage).toBeLessThan(1);
    expect(tr.stretch).toBeGreaterThanOrEqual(1);
    expect(tr.stretch).toBeLessThan(1.2);
    expect(tr.bakeSeconds).toBeGreaterThan(0);
    expect(tr.vertices).toBe(a.textures!.mesh.positions.length / 3);
    expect(Buffer.from(a.textures!.normalPng).equals(Buffer.from(b.textures!.normalPng))).toBe(true);
    expect(Buffer.from(a.textures!.baseColorPng!).equals(Buffer.from(b.textures!.baseColorPng!))).toBe(true);
  });

  test('a PNG compressor from the host shrinks the images; without one they are stored', async () => {
    const mesh = (await bake(sdf, 128)).mesh;
    const common = { size: 128, unwrapper: watlas, level: 0, cellSize: 0.02, searchDistance: 0.05 };
    const stored = await bakeTextures(sdf, mesh, common);
    const packed = await bakeTextures(sdf, mesh, { ...common, deflate: (x) => deflateSync(x) });
    expect(stored.normalPng.length).toBeGreaterThan(128 * 128 * 3);
    expect(packed.normalPng.length).toBeLessThan(stored.normalPng.length / 2);
  });
});

test('a field without color gets a normal map only', async () => {
  const plain = fnField((x, y, z) => Math.hypot(x, y, z) - 0.5, [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]);
  const r = await bakeField(plain, { depth: 5, budget: 500, texture: 64, unwrapper: watlas });
  expect(r.textures!.baseColor).toBeUndefined();
  expect(r.textures!.baseColorPng).toBeUndefined();
  expect(r.textures!.normalPng.length).toBeGreaterThan(0);
  expect(r.report.texture!.size).toBe(64);
});

describe('limits and errors', () => {
  const sdf = fnField((x, y, z) => Math.hypot(x, y, z) - 0.5, [-1, -1, -1, 1, 1, 1]);

  test(`more than ${TEXTURE_DEFAULTS.maxTriangles} triangles: a FieldkilnError that names the fix (--budget)`, async () => {
    const T = TEXTURE_DEFAULTS.maxTriangles + 1;
    const big: MeshData = { positions: new Float32Array(9), normals: new Float32Array(9), indices: new Uint32Array(3 * T) };
    const e = await bakeTextures(sdf, big, { size: 256, unwrapper: watlas, level: 0, cellSize: 0.01, searchDistance: 0.01 }).catch((x) => x);
    expect(e).toBeInstanceOf(FieldkilnError);
    expect(e.message).toMatch(/at most 50000 triangles and this mesh has 50001; give a triangle budget \(--budget\)/);
  });

  test('sizes that are not a power of two from 64 to 4096 are refused by the pipeline with a FieldkilnError', async () => {
    for (const size of [100, 32, 8192, 1.5]) {
      await expect(bakeField(sdf, { depth: 4, texture: size, unwrapper: watlas })).rejects.toThrow(/texture must be 0 \(none\) or a power of two from 64 to 4096/);
    }
  });

  test('textures without an unwrapper are misuse', async () => {
    await expect(bakeField(sdf, { depth: 4, texture: 64 })).rejects.toThrow(/needs options.unwrapper/);
  });
});
