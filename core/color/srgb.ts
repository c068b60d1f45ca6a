/**
 * Conversions between linear RGB and sRGB-encoded 8-bit values, with the sRGB transfer function
 * of IEC 61966-2-1 (linear below 0.0031308, otherwise 1.055·x^(1/2.4) − 0.055). glTF's COLOR_0 is
 * linear; PLY and OBJ vertex colors are read by viewers (and by three's loaders) as sRGB, so the
 * exporters encode them.
 */

/** Linear 0..1 → sRGB-encoded 0..1. */
export function linearToSrgb(x: number): number {
  const c = Math.min(1, Math.max(0, x));
  return c <= 0.0031308 ? 12.92 * c : 1.055 * Math.pow(c, 1 / 2.4) - 0.055;
}

/** sRGB-encoded 0..1 → linear 0..1. */
export function srgbToLinear(x: number): number {
  const c = Math.min(1, Math.max(0, x));
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}

/** Linear 0..1 → sRGB byte 0..255 (rounded). */
export function linearToSrgbByte(x: number): number {
  return Math.round(255 * linearToSrgb(Number.isFinite(x) ? x : 0));
}
