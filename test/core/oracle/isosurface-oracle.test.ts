/**
 * Our marching cubes against an outside implementation: the `isosurface` npm package's marchingCubes,
 * run on the very same lattice of samples (the birdbath grid fixture resampled on our depth-6 lattice,
 * and an analytic torus). Its output is an unwelded triangle soup whose shared vertices differ in the
 * last bits (../shared/DEPENDENCIES.md §2), so it is welded with a 1e-7 m tolerance before counting.
 * Same topology (Euler characteristic, components) and areas within 0.5% must hold.
 */
import { describe, expect, test } from 'vitest';
import { createRequire } from 'node:module';
import { openField } from '../../../app/fields/open-field.js';
import { sampleDense } from '../../../core/sampling/sample-dense.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { latticeNodePoints, makeLattice } from '../../../core/sampling/lattice.js';
import type { Field } from '../../../core/fields/field.js';
import { fixturePath, hasFixtures } from '../../helpers/fixtures.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';

const require = createRequire(import.meta.url);
const isosurface = require('isosurface') as {
  marchingCubes(dims: number[], potential: (x: number, y: number, z: number) => number, bounds?: number[][]): { positions: number[][]; cells: number[][] };
};

/** Samples `field` on our lattice at `depth` and runs the package's marching cubes on those values (index space). */
async function oracle(field: Field, depth: number) {
  const lat = makeLattice(field.bounds, depth);
  const [nx, ny, nz] = lat.cells;
  const pts = latticeNodePoints(lat);
  const vals = await field.evaluate(pts);
  const at = (i: number, j: number, k: number) => vals[i + (nx + 1) * (j + (ny + 1) * k)] - (field.defaultLevel ?? 0);
  // Default bounds [[0,0,0], dims] put sample i at x = i (index space).
  const soup = isosurface.marchingCubes([nx + 1, ny + 1, nz + 1], at);
  // Weld with tolerance, scale to metres.
  const ids = new Map<string, number>();
  const positions: number[] = [];
  const indices: number[] = [];
  const remap = soup.positions.map((p) => {
    const key = p.map((c) => Math.round(c * 1e5)).join(',');
    let id = ids.get(key);
    if (id === undefined) {
      id = positions.length / 3;
      ids.set(key, id);
      positions.push(lat.origin[0] + p[0] * lat.cellSize, lat.origin[1] + p[1] * lat.cellSize, lat.origin[2] + p[2] * lat.cellSize);
    }
    return id;
  });
  for (const c of soup.cells) {
    const t = c.map((v) => remap[v]);
    if (t[0] !== t[1] && t[1] !== t[2] && t[0] !== t[2]) indices.push(t[0], t[1], t[2]);
  }
  return analyzeMesh({ positions: new Float32Array(positions), indices: new Uint32Array(indices) });
}

async function ours(field: Field, depth: number) {
  return analyzeMesh(marchingCubes(await sampleDense(field, { depth })));
}

describe('marching cubes against the isosurface package', () => {
  test('analytic torus at depth 6: same χ and components, area within 0.5%', async () => {
    const field = fnField(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]);
    const [a, b] = [await ours(field, 6), await oracle(field, 6)];
    console.log(`torus: ours area ${a.area.toFixed(5)} χ ${a.eulerCharacteristic}; isosurface area ${b.area.toFixed(5)} χ ${b.eulerCharacteristic}`);
    expect(a.eulerCharacteristic).toBe(b.eulerCharacteristic);
    expect(a.components).toBe(b.components);
    expect(Math.abs(a.area / b.area - 1)).toBeLessThan(0.005);
  });

  test.skipIf(!hasFixtures)('birdbath grid fixture at depth 6: same χ and components, area within 0.5%', async () => {
    const field = await openField(fixturePath('birdbath_sdf_grid128.npy'));
    const [a, b] = [await ours(field, 6), await oracle(field, 6)];
    console.log(`birdbath: ours area ${a.area.toFixed(5)} χ ${a.eulerCharacteristic}; isosurface area ${b.area.toFixed(5)} χ ${b.eulerCharacteristic}`);
    expect(a.eulerCharacteristic).toBe(b.eulerCharacteristic);
    expect(a.components).toBe(b.components);
    expect(Math.abs(a.area / b.area - 1)).toBeLessThan(0.005);
    expect(Math.abs(a.volume / b.volume - 1)).toBeLessThan(0.005);
  });
});
