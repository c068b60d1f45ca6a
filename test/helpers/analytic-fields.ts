/**
 * Analytic test fields with known answers (textbook formulas), for tests and the benchmark only.
 * Distances follow the exact SDF formulas given in ../shared/fixtures/README.md.
 */
import type { Field } from '../../core/fields/field.js';
import type { Bounds, FieldKind } from '../../core/types.js';

export function fnField(
  fn: (x: number, y: number, z: number) => number,
  bounds: Bounds,
  opts: { kind?: FieldKind; level?: number; lipschitz?: number; costly?: boolean; color?: (x: number, y: number, z: number) => [number, number, number]; name?: string } = {},
): Field & { calls: number } {
  const f = {
    kind: opts.kind ?? 'sdf',
    bounds,
    defaultLevel: opts.level ?? (opts.kind === 'density' ? undefined : 0),
    hasColor: !!opts.color,
    lipschitz: opts.lipschitz ?? (opts.kind && opts.kind !== 'sdf' ? undefined : 1),
    costly: opts.costly,
    description: { source: 'test', name: opts.name ?? 'analytic', outputs: ['sdf'] },
    calls: 0,
    async evaluate(p: Float32Array) {
      const n = p.length / 3;
      f.calls += n;
      const out = new Float32Array(n);
      for (let i = 0; i < n; i++) out[i] = fn(p[3 * i], p[3 * i + 1], p[3 * i + 2]);
      return out;
    },
    evaluateColor: opts.color
      ? async (p: Float32Array) => {
          const n = p.length / 3;
          const out = new Float32Array(n * 3);
          for (let i = 0; i < n; i++) out.set(opts.color!(p[3 * i], p[3 * i + 1], p[3 * i + 2]), 3 * i);
          return out;
        }
      : undefined,
  } as Field & { calls: number };
  return f;
}

/** Sphere of radius r at c: |p − c| − r. Area 4πr², volume 4/3 πr³. */
export const sphereSdf = (r: number, c: [number, number, number] = [0, 0, 0]) => (x: number, y: number, z: number) =>
  Math.hypot(x - c[0], y - c[1], z - c[2]) - r;

/** Torus in the XZ plane, major R, minor r. Area 4π²Rr, volume 2π²Rr². */
export const torusSdf = (R: number, r: number) => (x: number, y: number, z: number) => Math.hypot(Math.hypot(x, z) - R, y) - r;

/** Axis-aligned box with half extents b. */
export const boxSdf = (b: [number, number, number], c: [number, number, number] = [0, 0, 0]) => (x: number, y: number, z: number) => {
  const dx = Math.abs(x - c[0]) - b[0], dy = Math.abs(y - c[1]) - b[1], dz = Math.abs(z - c[2]) - b[2];
  return Math.hypot(Math.max(dx, 0), Math.max(dy, 0), Math.max(dz, 0)) + Math.min(Math.max(dx, dy, dz), 0);
};
