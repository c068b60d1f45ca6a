/**
 * The usual way, kept as a reference: evaluate every node of the finest lattice, then keep the cells
 * whose corners straddle the level. It returns the same {@link SurfaceCells} as the octree sampler
 * (same lattice, same outer-layer rule), so tests can check that adaptive sampling misses nothing and
 * the benchmark can time both. Memory stays at two z-slabs of node values.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import type { Bounds } from '../types.js';
import { FieldkilnError, throwIfAborted } from '../types.js';
import { denseNodeCount, latticeNodePoints, makeLattice } from './lattice.js';
import type { SurfaceCells } from './sample-octree.js';

export async function sampleDense(
  field: Field,
  options: { depth: number; level?: number; bounds?: Bounds; signal?: AbortSignal },
): Promise<SurfaceCells> {
  const level = options.level ?? field.defaultLevel;
  if (level === undefined) throw new FieldkilnError('no iso-level: pass --level');
  const lat = makeLattice(options.bounds ?? field.bounds, options.depth);
  const [nx, ny, nz] = lat.cells;
  const slabN = (nx + 1) * (ny + 1);
  let vmin = Infinity;
  let vmax = -Infinity;
  let closedAtBounds = 0;
  const evalSlab = async (k: number): Promise<Float32Array> => {
    throwIfAborted(options.signal);
    const v = await field.evaluate(latticeNodePoints(lat, k, k), options.signal);
    const s = new Float32Array(slabN);
    for (let j = 0; j <= ny; j++)
      for (let i = 0; i <= nx; i++) {
        const x = v[i + (nx + 1) * j];
        if (Number.isFinite(x)) {
          if (x < vmin) vmin = x;
          if (x > vmax) vmax = x;
        }
        let val = Number.isFinite(x) ? signedFromValue(field.kind, x, level) : 1e30;
        if (val < 0 && (i === 0 || j === 0 || k === 0 || i === nx || j === ny || k === nz)) {
          val = 0;
          closedAtBounds++;
        }
        s[i + (nx + 1) * j] = val;
      }
    return s;
  };
  const coords: number[] = [];
  const corners: number[] = [];
  let lower = await evalSlab(0);
  for (let k = 0; k < nz; k++) {
    const upper = await evalSlab(k + 1);
    for (let j = 0; j < ny; j++)
      for (let i = 0; i < nx; i++) {
        const c: number[] = [];
        let inside = 0;
        for (let q = 0; q < 8; q++) {
          const slab = q & 4 ? upper : lower;
          const val = slab[i + (q & 1) + (nx + 1) * (j + ((q >> 1) & 1))];
          c.push(val);
          if (val < 0) inside++;
        }
        if (inside > 0 && inside < 8) {
          coords.push(i, j, k);
          corners.push(...c);
        }
      }
    lower = upper;
  }
  return {
    lattice: lat,
    level,
    count: coords.length / 3,
    coords: Int32Array.from(coords),
    corners: Float32Array.from(corners),
    evaluations: denseNodeCount(lat),
    denseEvaluations: denseNodeCount(lat),
    closedAtBounds,
    nonFinite: 0,
    valueRange: [vmin, vmax],
  };
}
