/**
 * Picks the iso-level slider's range and starting point from a coarse probe of the field
 * (core/sampling/probe-field.ts), so the slider covers levels that give a surface and little else.
 *
 * - sdf: levels are offsets in metres (negative shrinks, positive grows). The range runs from 90 % of
 *   the deepest inside value (below it the shape vanishes) to +15 % of the bounds' shortest side
 *   (beyond that the surface soon meets the bounds), each side clipped to the values seen.
 * - density / occupancy: from the 1st to the 99th percentile of the values seen (the extremes are
 *   usually empty space and the core of the object).
 * The declared level, when there is one, always lies inside the range. These proportions are our
 * own choice (common practice for offset sliders, not from a source); tests pin them.
 */
import type { FieldProbe } from '../../core/sampling/probe-field.js';
import type { Bounds, FieldKind } from '../../core/types.js';

/** Share of the bounds' shortest side an SDF slider may grow the shape by. */
export const SDF_GROW_SHARE = 0.15;
/** Share of the deepest inside value an SDF slider may shrink to. */
export const SDF_SHRINK_SHARE = 0.9;

/** The slider's range and where it starts, in the field's units. */
export interface LevelChoice {
  range: [number, number];
  start: number;
  /** Why `start` was picked, for the window: 'declared' (the file's), 'kind default' or 'middle of the values'. */
  startReason: 'declared' | 'kind default' | 'middle of the values';
}

/**
 * Chooses the level slider for a field.
 *
 * @param kind - What the values mean.
 * @param probe - Coarse statistics of the field (value range, percentiles).
 * @param bounds - The field's bounds, metres.
 * @param declaredLevel - The level the file declares, if any.
 * @example
 * chooseLevelRange('sdf', probe, [-1, -1, -1, 1, 1, 1], 0) // → { range: [-0.72, 0.3], start: 0, … } for a sphere of radius 0.8
 */
export function chooseLevelRange(kind: FieldKind, probe: Pick<FieldProbe, 'valueRange' | 'percentiles'>, bounds: Bounds, declaredLevel: number | undefined): LevelChoice {
  const [vmin, vmax] = probe.valueRange;
  const finite = Number.isFinite(vmin) && Number.isFinite(vmax);
  let lo: number;
  let hi: number;
  let start: number;
  let startReason: LevelChoice['startReason'];
  if (kind === 'sdf') {
    const shortest = Math.min(bounds[3] - bounds[0], bounds[4] - bounds[1], bounds[5] - bounds[2]);
    const grow = SDF_GROW_SHARE * shortest;
    lo = finite && vmin < 0 ? SDF_SHRINK_SHARE * vmin : -grow;
    hi = finite && vmax > 0 ? Math.min(vmax, grow) : grow;
    start = declaredLevel ?? 0;
    startReason = declaredLevel !== undefined ? 'declared' : 'kind default';
  } else {
    const { p1, p99 } = probe.percentiles;
    if (Number.isFinite(p1) && Number.isFinite(p99) && p1 < p99) [lo, hi] = [p1, p99];
    else if (finite && vmin < vmax) [lo, hi] = [vmin, vmax];
    else [lo, hi] = finite ? [vmin - 1, vmin + 1] : [-1, 1];
    if (declaredLevel !== undefined) {
      start = declaredLevel;
      startReason = 'declared';
    } else if (kind === 'occupancy') {
      start = 0;
      startReason = 'kind default';
    } else {
      start = (lo + hi) / 2;
      startReason = 'middle of the values';
    }
  }
  if (!(lo < hi)) [lo, hi] = [Math.min(lo, hi) - 1, Math.max(lo, hi) + 1];
  lo = Math.min(lo, start);
  hi = Math.max(hi, start);
  if (lo === hi) [lo, hi] = [lo - 1, hi + 1];
  return { range: [lo, hi], start, startReason };
}
