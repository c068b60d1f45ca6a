/**
 * The affine map of one recipe node: scale first, then rotate, then translate.
 *
 * A map is 12 numbers: a row-major 3x3 matrix `m[0..8]` and a translation `m[9..11]`, so
 * `y = M x + t`. Rotation matrices come from Rodrigues' rotation formula
 * (R = cos θ I + sin θ [u]× + (1 − cos θ) u uᵀ, right-handed, θ counter-clockwise looking down the axis).
 * Multiples of 90° use exact sines and cosines so that axis-aligned results stay exact.
 */
import type { RecipeNodeCommon } from './recipe-schema.js';

/** Row-major 3x3 matrix in `[0..8]`, translation in `[9..11]`: `y = M x + t`. */
export type Affine = Float64Array;

/** The identity map. */
export function identityAffine(): Affine {
  const a = new Float64Array(12);
  a[0] = a[4] = a[8] = 1;
  return a;
}

/** cos and sin of an angle in degrees, exact at multiples of 90°. */
function cosSinDegrees(degrees: number): [number, number] {
  const r = ((degrees % 360) + 360) % 360;
  if (r === 0) return [1, 0];
  if (r === 90) return [0, 1];
  if (r === 180) return [-1, 0];
  if (r === 270) return [0, -1];
  const a = (degrees * Math.PI) / 180;
  return [Math.cos(a), Math.sin(a)];
}

/**
 * The node's local-to-parent map: `parent = translate + R(rotate) · (scale · local)`.
 * @param node a normalized node (unit rotation axis).
 * @returns 12 numbers, see {@link Affine}.
 * @example nodeTransform({ translate: [0, 1, 0], rotate: null, scale: 2, color }) // 2x, then up 1 m
 */
export function nodeTransform(node: Pick<RecipeNodeCommon, 'translate' | 'rotate' | 'scale'>): Affine {
  const s = node.scale;
  const a = new Float64Array(12);
  if (node.rotate) {
    const [x, y, z] = node.rotate.axis;
    const [c, sn] = cosSinDegrees(node.rotate.degrees);
    const k = 1 - c;
    a[0] = c + x * x * k;
    a[1] = x * y * k - z * sn;
    a[2] = x * z * k + y * sn;
    a[3] = y * x * k + z * sn;
    a[4] = c + y * y * k;
    a[5] = y * z * k - x * sn;
    a[6] = z * x * k - y * sn;
    a[7] = z * y * k + x * sn;
    a[8] = c + z * z * k;
    for (let i = 0; i < 9; i++) a[i] *= s;
  } else {
    a[0] = a[4] = a[8] = s;
  }
  a[9] = node.translate[0];
  a[10] = node.translate[1];
  a[11] = node.translate[2];
  return a;
}

/**
 * The inverse (parent-to-local) map of a node: `local = Rᵀ (parent − translate) / scale`.
 * Exact for the similarity maps nodes have; no general matrix inversion is needed.
 */
export function inverseNodeTransform(node: Pick<RecipeNodeCommon, 'translate' | 'rotate' | 'scale'>): Affine {
  const f = nodeTransform({ translate: [0, 0, 0], rotate: node.rotate, scale: 1 });
  const inv = 1 / node.scale;
  const a = new Float64Array(12);
  // Rᵀ / s
  for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) a[r * 3 + c] = f[c * 3 + r] * inv;
  const [tx, ty, tz] = node.translate;
  a[9] = -(a[0] * tx + a[1] * ty + a[2] * tz);
  a[10] = -(a[3] * tx + a[4] * ty + a[5] * tz);
  a[11] = -(a[6] * tx + a[7] * ty + a[8] * tz);
  return a;
}

/** `outer ∘ inner`: the map that applies `inner` first, then `outer`. */
export function composeAffine(outer: Affine, inner: Affine): Affine {
  const a = new Float64Array(12);
  for (let r = 0; r < 3; r++) {
    for (let c = 0; c < 3; c++) {
      a[r * 3 + c] = outer[r * 3] * inner[c] + outer[r * 3 + 1] * inner[3 + c] + outer[r * 3 + 2] * inner[6 + c];
    }
    a[9 + r] = outer[r * 3] * inner[9] + outer[r * 3 + 1] * inner[10] + outer[r * 3 + 2] * inner[11] + outer[9 + r];
  }
  return a;
}
