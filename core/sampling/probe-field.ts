/**
 * A coarse look at a field: evaluates a regular lattice of (2^depth + 1) nodes along the longest side
 * (default depth 5: 33 nodes) over the bounds and reports the value range, the share of samples
 * inside at the level, and whether the level is crossed at all. Used by `inspect` and to warn about a
 * level outside the values a field takes.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import type { Bounds } from '../types.js';
import { latticeNodePoints, makeLattice } from './lattice.js';

export interface FieldProbe {
  samples: number;
  /** Smallest and largest finite value seen; [NaN, NaN] when none was finite. */
  valueRange: [number, number];
  nonFinite: number;
  /** Share of finite samples inside at `level` (undefined when no level is known). */
  insideFraction?: number;
  /** True when the level lies strictly between the smallest and largest value seen. */
  surfaceFound?: boolean;
  /** Percentiles 1, 50, 99 of the values: a guide for picking a density level. */
  percentiles: { p1: number; p50: number; p99: number };
}

export async function probeField(field: Field, opts: { depth?: number; level?: number; bounds?: Bounds; signal?: AbortSignal } = {}): Promise<FieldProbe> {
  const lat = makeLattice(opts.bounds ?? field.bounds, opts.depth ?? 5);
  const pts = latticeNodePoints(lat);
  const n = pts.length / 3;
  const vals = await field.evaluate(pts, opts.signal);
  const finite: number[] = [];
  let nonFinite = 0;
  for (const v of vals) {
    if (Number.isFinite(v)) finite.push(v);
    else nonFinite++;
  }
  finite.sort((a, b) => a - b);
  const pick = (p: number) => (finite.length ? finite[Math.min(finite.length - 1, Math.floor(p * finite.length))] : NaN);
  const level = opts.level ?? field.defaultLevel;
  const probe: FieldProbe = {
    samples: n,
    valueRange: finite.length ? [finite[0], finite[finite.length - 1]] : [NaN, NaN],
    nonFinite,
    percentiles: { p1: pick(0.01), p50: pick(0.5), p99: pick(0.99) },
  };
  if (level !== undefined && finite.length) {
    let inside = 0;
    for (const v of finite) if (signedFromValue(field.kind, v, level) < 0) inside++;
    probe.insideFraction = inside / finite.length;
    probe.surfaceFound = inside > 0 && inside < finite.length;
  }
  return probe;
}
