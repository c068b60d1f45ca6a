/**
 * Adaptive sampling must find exactly the surface cells that evaluating the whole lattice finds,
 * while asking for a small share of the points.
 */
import { afterAll, describe, expect, test } from 'vitest';
import { openField } from '../../../app/fields/open-field.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { sampleDense } from '../../../core/sampling/sample-dense.js';
import type { Field } from '../../../core/fields/field.js';
import { fixturePath, hasFixtures, loadManifest } from '../../helpers/fixtures.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';
import { surfaceCellCorners } from '../../helpers/surface-cell-corners.js';

describe.skipIf(!hasFixtures)('octree sampling against dense evaluation (shared fixtures)', () => {
  const opened: Field[] = [];
  afterAll(async () => {
    for (const f of opened) await f.dispose?.();
  });
  const manifest = hasFixtures ? loadManifest() : { fixtures: [] };
  for (const fx of manifest.fixtures) {
    test(`${fx.id} at depth 7: the same surface cells and corner values as the dense lattice`, async () => {
      const field = await openField(fixturePath(fx.file));
      opened.push(field);
      const sparse = await sampleOctree(field, { depth: 7 });
      const dense = await sampleDense(field, { depth: 7 });
      console.log(`${fx.id}: ${sparse.count} surface cells; ${sparse.evaluations} evaluations vs ${dense.evaluations} dense (${((100 * sparse.evaluations) / dense.evaluations).toFixed(2)}%)`);
      expect(sparse.denseEvaluations).toBe(dense.evaluations);
      expect(sparse.count).toBe(dense.count);
      expect(Array.from(sparse.coords)).toEqual(Array.from(dense.coords));
      expect(Array.from(sparse.corners)).toEqual(Array.from(dense.corners));
      expect(sparse.evaluations).toBeLessThan(dense.evaluations);
    });
  }

  test('sphere_sdf.onnx at depth 9 asks for at most 2% of the 513³ lattice', async () => {
    const field = await openField(fixturePath('sphere_sdf.onnx'));
    opened.push(field);
    const cells = await sampleOctree(field, { depth: 9 });
    console.log(`sphere_sdf.onnx depth 9: ${cells.evaluations} of ${cells.denseEvaluations} (${((100 * cells.evaluations) / cells.denseEvaluations).toFixed(3)}%)`);
    expect(cells.denseEvaluations).toBe(513 ** 3);
    expect(cells.evaluations).toBeLessThanOrEqual(0.02 * 513 ** 3);
  });
});

describe('octree sampling on analytic fields', () => {
  test('density field: coarse-to-fine refinement finds the same cells as the dense lattice', async () => {
    // density = 40·sigmoid(−sdf/0.02), surface at density 20 (the fixture README's transfer function).
    const sd = sphereSdf(0.4);
    const field = fnField((x, y, z) => 40 / (1 + Math.exp(sd(x, y, z) / 0.02)), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { kind: 'density', level: 20 });
    const sparse = await sampleOctree(field, { depth: 6 });
    const dense = await sampleDense(field, { depth: 6 });
    expect(Array.from(sparse.coords)).toEqual(Array.from(dense.coords));
    expect(sparse.evaluations).toBeLessThan(dense.evaluations / 2);
  });

  test('a thin shell between coarse samples is found through its face neighbours and the flood fill', async () => {
    // A spherical shell 0.03 m thick: thinner than a start-level cell (1.2/32 = 0.0375 m).
    const field = fnField((x, y, z) => Math.abs(Math.hypot(x, y, z) - 0.4) - 0.015, [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { kind: 'sdf' });
    const asDensity = fnField((x, y, z) => -Math.abs(Math.hypot(x, y, z) - 0.4) + 0.015, field.bounds, { kind: 'density', level: 0 });
    const sparse = await sampleOctree(asDensity, { depth: 7 });
    const dense = await sampleDense(asDensity, { depth: 7 });
    expect(sparse.count).toBe(dense.count);
  });

  test('cancellation through an AbortSignal stops sampling', async () => {
    const ac = new AbortController();
    ac.abort();
    await expect(sampleOctree(fnField(sphereSdf(0.5), [-1, -1, -1, 1, 1, 1]), { depth: 8, signal: ac.signal })).rejects.toThrow(/cancel/);
  });

  test('NaN from the field: a clear error by default, outside with nonfinite=outside', async () => {
    const sd = sphereSdf(0.5);
    const field = fnField((x, y, z) => (x > 0.6 ? NaN : sd(x, y, z)), [-1, -1, -1, 1, 1, 1]);
    await expect(sampleOctree(field, { depth: 5 })).rejects.toThrow(/non-finite values .* the first at \(/);
    const cells = await sampleOctree(field, { depth: 5, nonfinite: 'outside' });
    expect(cells.nonFinite).toBeGreaterThan(0);
    expect(cells.count).toBeGreaterThan(0);
  });
});

describe('octree sampling: cost and uneven bounds', () => {
  test('an exact sphere SDF at depth 8 costs under 1.6× the corners of its surface cells', async () => {
    // |p| − r is 1-Lipschitz (a distance function), so L = 1 is exact here.
    const field = fnField(sphereSdf(0.45), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { lipschitz: 1 });
    const cells = await sampleOctree(field, { depth: 8 });
    const least = surfaceCellCorners(cells);
    console.log(`sphere depth 8: ${cells.evaluations} evaluations, ${least} surface-cell corners (${(cells.evaluations / least).toFixed(2)}×)`);
    expect(cells.evaluations).toBeLessThan(1.6 * least);
  });

  test('hundreds of balls smaller than a cell: the dense lattice\'s surface cells, with far fewer evaluations', async () => {
    // The distance to a union of balls, min(|p − c| − r), is 1-Lipschitz (a distance function), so L = 1
    // is exact. Balls of radius 0.3–1.2 cells are separate sheets that often change no sign at the cheap
    // corners (a parent corner and the parent centre): only the doubtful-cell step can find them, and
    // its proofs from neighbouring nodes must not drop one.
    const depth = 6, h = 1 / 2 ** depth;
    let seed = 7;
    const rnd = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 4294967296);
    const balls: number[] = [];
    for (let b = 0; b < 300; b++) balls.push(-0.45 + 0.9 * rnd(), -0.45 + 0.9 * rnd(), -0.45 + 0.9 * rnd(), h * (0.3 + 0.9 * rnd()));
    const sd = (x: number, y: number, z: number) => {
      let d = Infinity;
      for (let b = 0; b < balls.length; b += 4) d = Math.min(d, Math.hypot(x - balls[b], y - balls[b + 1], z - balls[b + 2]) - balls[b + 3]);
      return d;
    };
    const field = fnField(sd, [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5], { lipschitz: 1 });
    const sparse = await sampleOctree(field, { depth });
    const dense = await sampleDense(field, { depth });
    expect(sparse.count).toBeGreaterThan(300); // most balls cross lattice edges
    expect(Array.from(sparse.coords)).toEqual(Array.from(dense.coords));
    expect(Array.from(sparse.corners)).toEqual(Array.from(dense.corners));
    expect(sparse.evaluations).toBeLessThan(dense.evaluations / 4);
  });

  for (const kind of ['sdf', 'density'] as const) {
    test(`${kind} field in bounds that are not a power-of-two number of cells: the dense lattice's surface cells`, async () => {
      // Clipped coarse cells at the lattice's far edges; the sphere pokes out of the bounds on y, so the
      // outside-the-bounds rule caps it there too.
      const sd = sphereSdf(0.42);
      const b = [-0.6, -0.4, -0.5, 0.55, 0.4, 0.45] as [number, number, number, number, number, number];
      const field = kind === 'sdf' ? fnField(sd, b) : fnField((x, y, z) => -sd(x, y, z), b, { kind: 'density', level: 0 });
      // Every point the sampler asks for is asked once (clipped coarse cells included).
      const asked = new Set<string>();
      let total = 0;
      const counting = Object.create(field) as typeof field;
      counting.evaluate = async (p: Float32Array) => {
        for (let i = 0; i < p.length; i += 3, total++) asked.add(`${p[i]},${p[i + 1]},${p[i + 2]}`);
        return field.evaluate(p);
      };
      const sparse = await sampleOctree(counting, { depth: 6 });
      expect(total).toBe(sparse.evaluations);
      expect(asked.size).toBe(total);
      const dense = await sampleDense(field, { depth: 6 });
      expect(sparse.lattice.cells).toEqual(dense.lattice.cells);
      expect(Array.from(sparse.coords)).toEqual(Array.from(dense.coords));
      expect(Array.from(sparse.corners)).toEqual(Array.from(dense.corners));
      expect(sparse.closedAtBounds).toBeGreaterThan(0);
    });
  }
});

describe('octree sampling: a field steeper than its bound is noticed', () => {
  test('the steepest surface-cell edge slope: ≤ 1 for an exact SDF, about 1.6 for 1.6 times one', async () => {
    // |p| − r is 1-Lipschitz; 1.6(|p| − r) has gradient norm 1.6 everywhere (analytic). Pruned with a
    // bound of 1 it still reaches the surface here (the flood fill follows it), and the slope says so.
    const exact = await sampleOctree(fnField(sphereSdf(0.4), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { lipschitz: 1 }), { depth: 6 });
    expect(exact.steepestEdgeSlope).toBeLessThanOrEqual(1 + 1e-5);
    expect(exact.steepestEdgeSlope).toBeGreaterThan(0.9); // an axis-aligned edge across the surface near a pole
    const sd = sphereSdf(0.4);
    const steep = await sampleOctree(fnField((x, y, z) => 1.6 * sd(x, y, z), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { lipschitz: 1 }), { depth: 6 });
    expect(steep.count).toBe(exact.count); // same zero set, same lattice
    expect(steep.lipschitz).toBe(1);
    expect(steep.steepestEdgeSlope).toBeGreaterThan(1.45);
    expect(steep.steepestEdgeSlope).toBeLessThanOrEqual(1.6 + 1e-5);
  });
});
