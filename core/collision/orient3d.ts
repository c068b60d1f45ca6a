/**
 * Exact orientation of a point against a triangle's plane: the sign of
 * (d − a)·((b − a) × (c − a)), computed exactly for coordinates that are float32 values.
 *
 * Adaptive, after Shewchuk 1997, "Adaptive precision floating-point arithmetic and fast robust
 * geometric predicates" (Discrete & Computational Geometry 18): the determinant is first evaluated
 * in float64 in his `orient3d` layout (differences to d, then 2×2 minors), and its sign is trusted
 * when its magnitude exceeds his forward error bound for that evaluation, (7 + 56ε)ε × the
 * permanent (ε = 2⁻⁵³). Otherwise (near-coplanar points, rare) it is recomputed exactly: every
 * float32 value times 2¹⁴⁹ is an integer (2⁻¹⁴⁹ is float32's smallest step), so the determinant of
 * those integers as BigInt has the exact sign. Shewchuk's intermediate expansion stages are
 * skipped; BigInt is slower, but only the few near-coplanar cases pay for it.
 */

/** ε of the error bound: half a float64 ulp of 1. */
const EPS = 2 ** -53;
/** Shewchuk's o3derrboundA. */
const ERRBOUND = (7 + 56 * EPS) * EPS;
/** Scale that makes every float32 value an integer. */
const SCALE = 2 ** 149;

/**
 * +1 when point d lies above the plane of triangle (a, b, c) (the side (b − a) × (c − a) points
 * to), −1 below, 0 on it; exact when the coordinates are float32 values.
 * @param p coordinates, 3 per point (float32 values held in any array).
 * @param a index of a point in `p`; likewise b, c, d.
 * @example
 * orient3d(Float64Array.of(0,0,0, 1,0,0, 0,1,0, 0,0,1), 0, 1, 2, 3); // 1
 */
export function orient3d(p: ArrayLike<number>, a: number, b: number, c: number, d: number): number {
  const dx = p[3 * d], dy = p[3 * d + 1], dz = p[3 * d + 2];
  const adx = p[3 * a] - dx, ady = p[3 * a + 1] - dy, adz = p[3 * a + 2] - dz;
  const bdx = p[3 * b] - dx, bdy = p[3 * b + 1] - dy, bdz = p[3 * b + 2] - dz;
  const cdx = p[3 * c] - dx, cdy = p[3 * c + 1] - dy, cdz = p[3 * c + 2] - dz;
  const bdxcdy = bdx * cdy, cdxbdy = cdx * bdy;
  const cdxady = cdx * ady, adxcdy = adx * cdy;
  const adxbdy = adx * bdy, bdxady = bdx * ady;
  // Shewchuk's orient3d(a, b, c, d) = det[a − d; b − d; c − d], positive when d is below abc
  // (abc counter-clockwise seen from above), i.e. the negative of ours.
  const det = adz * (bdxcdy - cdxbdy) + bdz * (cdxady - adxcdy) + cdz * (adxbdy - bdxady);
  const permanent =
    (Math.abs(bdxcdy) + Math.abs(cdxbdy)) * Math.abs(adz) +
    (Math.abs(cdxady) + Math.abs(adxcdy)) * Math.abs(bdz) +
    (Math.abs(adxbdy) + Math.abs(bdxady)) * Math.abs(cdz);
  if (det > ERRBOUND * permanent) return -1;
  if (-det > ERRBOUND * permanent) return 1;
  const exact = exactSign(p, a, b, c, d);
  return exact === 0 ? 0 : -exact;
}

/** Sign of det[a − d; b − d; c − d] in exact integer arithmetic. */
function exactSign(p: ArrayLike<number>, a: number, b: number, c: number, d: number): number {
  const q = (i: number, k: number) => BigInt(p[3 * i + k] * SCALE);
  const dx = q(d, 0), dy = q(d, 1), dz = q(d, 2);
  const adx = q(a, 0) - dx, ady = q(a, 1) - dy, adz = q(a, 2) - dz;
  const bdx = q(b, 0) - dx, bdy = q(b, 1) - dy, bdz = q(b, 2) - dz;
  const cdx = q(c, 0) - dx, cdy = q(c, 1) - dy, cdz = q(c, 2) - dz;
  const det = adz * (bdx * cdy - cdx * bdy) + bdz * (cdx * ady - adx * cdy) + cdz * (adx * bdy - bdx * ady);
  return det > 0n ? 1 : det < 0n ? -1 : 0;
}
