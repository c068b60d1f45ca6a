/**
 * The parallel dense-grid extractor must give core's single-threaded `marchingCubesGrid` mesh byte for
 * byte (that function is the reference: same positions, same indices, same order), whatever the number of
 * workers and slabs, and refuse bad input with an error naming the problem.
 *
 * The worker runs from build/ (like field-worker-pool.test.ts): run `npx tsc -p tsconfig.build.json` first.
 */
import { afterAll, describe, expect, test } from 'vitest';
import { marchingCubesGrid, type MarchingCubesGridOptions } from '../../../core/meshing/marching-cubes-grid.js';
import {
  closeMarchingCubesGridPool,
  marchingCubesGridParallel,
  marchingCubesGridPoolSize,
  shareGridValues,
} from '../../../app/node/marching-cubes-grid-parallel.js';
import { sphereSdf } from '../../helpers/analytic-fields.js';
import { expectClosedManifold, rng } from '../../helpers/expect-mesh.js';

type Dims = [number, number, number];

function sampleGrid(dims: Dims, h: number, origin: Dims, f: (x: number, y: number, z: number) => number): Float32Array {
  const values = new Float32Array(dims[0] * dims[1] * dims[2]);
  for (let k = 0, q = 0; k < dims[2]; k++)
    for (let j = 0; j < dims[1]; j++) for (let i = 0; i < dims[0]; i++) values[q++] = f(origin[0] + i * h, origin[1] + j * h, origin[2] + k * h);
  return values;
}

const bytes = (a: Float32Array | Uint32Array) => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

/** Parallel result equals the single-threaded one: the mesh's bytes and the block/cell counts. */
async function expectSameAsSingle(values: Float32Array, dims: Dims, options: MarchingCubesGridOptions, workers: number, slabs?: number) {
  const single = marchingCubesGrid(values, dims, options);
  const par = await marchingCubesGridParallel(values, dims, options, { workers, slabs });
  const label = `${dims.join('×')} workers ${workers} slabs ${par.slabs}`;
  expect(par.mesh.positions.length, label).toBe(single.mesh.positions.length);
  expect(par.mesh.indices.length, label).toBe(single.mesh.indices.length);
  // Byte comparison: Float32 bit patterns (−0 vs 0 included) and index order.
  expect(Buffer.compare(bytes(par.mesh.positions), bytes(single.mesh.positions)), `${label}: positions`).toBe(0);
  expect(Buffer.compare(bytes(par.mesh.indices), bytes(single.mesh.indices)), `${label}: indices`).toBe(0);
  // Whole, own buffers (not views into something larger), like the single-threaded result.
  expect(par.mesh.positions.byteLength).toBe(par.mesh.positions.buffer.byteLength);
  expect(par.mesh.indices.byteLength).toBe(par.mesh.indices.buffer.byteLength);
  expect([par.surfaceCells, par.activeBlocks, par.totalBlocks], label).toEqual([single.surfaceCells, single.activeBlocks, single.totalBlocks]);
  return { single, par };
}

afterAll(async () => {
  await closeMarchingCubesGridPool();
});

describe('parallel dense-grid marching cubes', () => {
  test('sphere on an odd-sized grid: same bytes as marchingCubesGrid for 1, 2 and 3 workers and any slab count', async () => {
    // 37×41×45 samples: 36/40/44 cells, none a multiple of the 8-cell block, so the last block layer is thin.
    const dims: Dims = [37, 41, 45];
    const h = 0.05;
    const values = sampleGrid(dims, h, [-0.9, -1, -1.1], sphereSdf(0.8));
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0, origin: [-0.9, -1, -1.1], spacing: [h, h, h] };
    for (const workers of [1, 2, 3]) {
      const { single } = await expectSameAsSingle(values, dims, opts, workers);
      expectClosedManifold(single.mesh, 'sphere');
    }
    // One slab per block layer (6 of them): every layer boundary is stitched.
    for (const slabs of [2, 3, 6, 100]) await expectSameAsSingle(values, dims, opts, 2, slabs);
  });

  test('busy gyroid-like field with small blocks: same bytes, every layer boundary stitched', async () => {
    // sin x cos y + sin y cos z + sin z cos x (the gyroid's usual approximation): surface in most blocks,
    // crossing every slab plane many times. Blocks of 3 cells: 48 cells in z make 16 block layers.
    const dims: Dims = [42, 47, 49];
    const h = 0.31;
    const gyroid = (x: number, y: number, z: number) => Math.sin(x) * Math.cos(y) + Math.sin(y) * Math.cos(z) + Math.sin(z) * Math.cos(x);
    const values = sampleGrid(dims, h, [0.1, 0.2, 0.3], gyroid);
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0.1, origin: [0.1, 0.2, 0.3], spacing: [h, h, h], blockSize: 3 };
    for (const workers of [1, 2, 3]) await expectSameAsSingle(values, dims, opts, workers);
    const { single } = await expectSameAsSingle(values, dims, opts, 3, 16);
    expect(single.mesh.indices.length / 3).toBeGreaterThan(20_000);
  });

  test('random noise (many ambiguous faces, surface cut by the bounds), density kind: same bytes', async () => {
    // Uniform noise around the level makes about half the cells surface cells and many faces ambiguous
    // (the asymptotic decider and centroid fans are exercised); the outer layer is forced outside.
    const r = rng(11);
    for (const [dims, blockSize] of [
      [[23, 19, 29], 4],
      [[9, 11, 2], 8],
      [[5, 6, 40], 1],
    ] as [Dims, number][]) {
      const values = Float32Array.from({ length: dims[0] * dims[1] * dims[2] }, () => r());
      const opts: MarchingCubesGridOptions = { kind: 'density', level: 0.5, origin: [0, 0, 0], spacing: [1, 0.5, 2], blockSize };
      for (const workers of [1, 2, 3]) await expectSameAsSingle(values, dims, opts, workers);
      await expectSameAsSingle(values, dims, opts, 2, 1000);
    }
  });

  test('all-outside and all-inside grids: same bytes (nothing, and the box the outer layer makes)', async () => {
    const dims: Dims = [10, 10, 20];
    for (const v of [1, -1]) {
      const values = new Float32Array(10 * 10 * 20).fill(v);
      // All outside (+1) gives nothing. All inside (−1) gives a box just inside the bounds, because the grid's
      // outer layer counts as outside (core's rule, so the mesh is closed).
      const { par } = await expectSameAsSingle(values, dims, { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1], blockSize: 2 }, 2, 5);
      if (v === 1) expect(par.mesh.indices.length).toBe(0);
      else expect(par.mesh.indices.length).toBeGreaterThan(0);
    }
  });

  test('shared input is not copied, and the pool is reused across calls', async () => {
    const dims: Dims = [30, 30, 30];
    const values = shareGridValues(sampleGrid(dims, 0.07, [-1, -1, -1], sphereSdf(0.7)));
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0, origin: [-1, -1, -1], spacing: [0.07, 0.07, 0.07] };
    const a = await marchingCubesGridParallel(values, dims, opts, { workers: 2 });
    const size = marchingCubesGridPoolSize();
    const b = await marchingCubesGridParallel(values, dims, opts, { workers: 2 });
    expect(a.copySeconds).toBe(0); // no copy was made: the field is a literal 0, not a measured time
    expect(marchingCubesGridPoolSize()).toBe(size);
    expect(Buffer.compare(bytes(a.mesh.indices), bytes(b.mesh.indices))).toBe(0);
    // Two calls at once share the pool and still each get the single-threaded mesh.
    const single = marchingCubesGrid(values, dims, opts);
    const [c, d] = await Promise.all([marchingCubesGridParallel(values, dims, opts, { workers: 2 }), marchingCubesGridParallel(values, dims, opts, { workers: 3 })]);
    for (const m of [c, d]) expect(Buffer.compare(bytes(m.mesh.positions), bytes(single.mesh.positions))).toBe(0);
  });

  test('unshared input: the kept shared copy never leaks one call\'s values into another', async () => {
    // Unshared arrays are copied into a shared buffer that is kept for the next call. Two different grids
    // of one size, one after the other and then at once, must each give their own single-threaded mesh.
    const dims: Dims = [25, 26, 27];
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0, origin: [-1, -1, -1], spacing: [0.08, 0.08, 0.08], blockSize: 4 };
    const a = sampleGrid(dims, 0.08, [-1, -1, -1], sphereSdf(0.6));
    const b = sampleGrid(dims, 0.08, [-1, -1, -1], sphereSdf(0.5, [0.2, 0, 0]));
    await expectSameAsSingle(a, dims, opts, 2);
    await expectSameAsSingle(b, dims, opts, 2);
    const [pa, pb] = await Promise.all([marchingCubesGridParallel(a, dims, opts, { workers: 2 }), marchingCubesGridParallel(b, dims, opts, { workers: 2 })]);
    expect(Buffer.compare(bytes(pa.mesh.positions), bytes(marchingCubesGrid(a, dims, opts).mesh.positions))).toBe(0);
    expect(Buffer.compare(bytes(pb.mesh.positions), bytes(marchingCubesGrid(b, dims, opts).mesh.positions))).toBe(0);
  });

  test('a pool closed mid-call fails that call with a clear error, and the next call starts a new pool', async () => {
    const dims: Dims = [40, 40, 40];
    const values = sampleGrid(dims, 0.05, [-1, -1, -1], sphereSdf(0.7));
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0, origin: [-1, -1, -1], spacing: [0.05, 0.05, 0.05], blockSize: 2 };
    const outcome = marchingCubesGridParallel(values, dims, opts, { workers: 2, slabs: 20 }).then(
      () => null,
      (e: Error) => e,
    );
    await closeMarchingCubesGridPool();
    expect((await outcome)?.message).toMatch(/marchingCubesGridParallel: a worker stopped/);
    expect(marchingCubesGridPoolSize()).toBe(0);
    await expectSameAsSingle(values, dims, opts, 2);
  });

  test('bad input is refused with an error naming the problem', async () => {
    const opts: MarchingCubesGridOptions = { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1] };
    const values = new Float32Array(27);
    const call = (v: unknown, dims: unknown, o: MarchingCubesGridOptions = opts, p = {}) => marchingCubesGridParallel(v as Float32Array, dims as Dims, o, p);
    await expect(call(values, [3, 3, 4])).rejects.toThrow(/marchingCubesGridParallel: 27 values for 3×3×4 samples/);
    await expect(call(new Float32Array(3), [1, 1, 3])).rejects.toThrow(/marchingCubesGridParallel: every axis needs at least 2 samples/);
    await expect(call(values, [3, 3])).rejects.toThrow(/marchingCubesGridParallel: dims must be three whole numbers/);
    await expect(call(new Float64Array(27), [3, 3, 3])).rejects.toThrow(/marchingCubesGridParallel: values must be a Float32Array/);
    await expect(call(values, [3, 3, 3], opts, { workers: 0 })).rejects.toThrow(/marchingCubesGridParallel: workers must be a whole number ≥ 1, got 0/);
    await expect(call(values, [3, 3, 3], opts, { slabs: 1.5 })).rejects.toThrow(/marchingCubesGridParallel: slabs must be a whole number ≥ 1/);
    await expect(call(values, [3, 3, 3], { ...opts, blockSize: 0 })).rejects.toThrow(/marchingCubesGridParallel: blockSize must be a whole number ≥ 1, got 0/);
    await expect(call(values, [3, 3, 3], { ...opts, kind: 'distance' as never })).rejects.toThrow(/marchingCubesGridParallel: options.kind must be one of sdf, density, occupancy/);
    await expect(call(values, [3, 3, 3], { ...opts, spacing: [1, 1] as never })).rejects.toThrow(/marchingCubesGridParallel: options.spacing must be three numbers/);
    // A failed call leaves the pool usable.
    await expectSameAsSingle(Float32Array.from({ length: 27 }, (_, q) => (q === 13 ? -1 : 1)), [3, 3, 3], opts, 2);
  });
});
