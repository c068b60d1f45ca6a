/**
 * One benchmark case, run in its own process so its peak memory (maxRSS) and timings are its own.
 * Usage: node build/test/bench/bench-case.js '<json spec>'; prints one JSON line.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { availableParallelism, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { openField } from '../../app/fields/open-field.js';
import { bakeField } from '../../core/pipeline/bake-field.js';
import { sampleOctree } from '../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../core/meshing/marching-cubes.js';
import { marchingCubesGrid } from '../../core/meshing/marching-cubes-grid.js';
import { closeMarchingCubesGridPool, marchingCubesGridParallel, shareGridValues, startMarchingCubesGridPool } from '../../app/node/marching-cubes-grid-parallel.js';
import { analyzeMesh } from '../../core/checks/analyze-mesh.js';
import { checkMeshOffThread } from '../../app/node/check-mesh-off-thread.js';
import { latticeNodePoints, makeLattice } from '../../core/sampling/lattice.js';
import type { Field } from '../../core/fields/field.js';
import { makeBenchGrid, type BenchShape } from './bench-grids.js';
import { surfaceCellCorners } from '../helpers/surface-cell-corners.js';

const require = createRequire(import.meta.url);
const ROOT = resolve(new URL('.', import.meta.url).pathname, '..', '..', '..');

type Spec =
  /** `checksInline`: the check stage on the calling thread, after the rest (default: on its own thread, as the CLI runs it). */
  | { type: 'pipeline'; file: string; depth: number; threads?: number; budget?: number; lods?: number; checksInline?: boolean }
  | { type: 'usual'; file: string; depth: number; slabs?: number }
  | { type: 'raw'; file: string; depth: number }
  | { type: 'inference'; file: string; batch: number; threads?: number }
  /** `cache`: a file holding the grid's values (float32, raw): read when it exists, else written after making the grid. */
  | { type: 'grid'; shape: BenchShape; n: number; isosurface: boolean; cache?: string };

/** Wraps a field so the time spent inside `evaluate` (the model itself) is counted. */
function timed(field: Field): Field & { seconds: number; points: number } {
  const t = Object.create(field) as Field & { seconds: number; points: number };
  t.seconds = 0;
  t.points = 0;
  t.evaluate = async (p: Float32Array, s?: AbortSignal) => {
    const t0 = performance.now();
    const v = await field.evaluate(p, s);
    t.seconds += (performance.now() - t0) / 1000;
    t.points += p.length / 3;
    return v;
  };
  if (field.evaluateColor) {
    t.evaluateColor = async (p: Float32Array, s?: AbortSignal) => {
      const t0 = performance.now();
      const v = await field.evaluateColor!(p, s);
      t.seconds += (performance.now() - t0) / 1000;
      return v;
    };
  }
  return t;
}

const rss = () => process.resourceUsage().maxRSS * 1024;

async function run(spec: Spec): Promise<Record<string, unknown>> {
  if (spec.type === 'pipeline') {
    const t0 = performance.now();
    const base = await openField(resolve(ROOT, spec.file), {}, { intraOpNumThreads: spec.threads });
    const open = (performance.now() - t0) / 1000;
    const field = timed(base);
    // As the CLI bakes: the check stage's scans on a thread of their own (app/cli/commands/bake.ts).
    const meshChecker = spec.checksInline ? undefined : checkMeshOffThread;
    const { report } = await bakeField(field, { depth: spec.depth, budget: spec.budget, lods: spec.lods, meshChecker });
    await base.dispose?.();
    const total = open + report.timings.total;
    return {
      evaluations: report.sampling.evaluations,
      denseEvaluations: report.sampling.denseEvaluations,
      timings: { open, ...report.timings, total },
      inferenceSeconds: field.seconds,
      inferencePoints: field.points,
      outsideInferenceShare: (total - field.seconds) / total,
      triangles: report.mesh.triangles,
      area: report.mesh.area,
      watertight: report.mesh.watertight,
      peakRss: rss(),
    };
  }
  if (spec.type === 'raw') {
    // Ours doing the same work as the usual way: adaptive sampling + marching cubes to the same raw mesh.
    const field = await openField(resolve(ROOT, spec.file));
    const t0 = performance.now();
    const cells = await sampleOctree(field, { depth: spec.depth });
    const mesh = marchingCubes(cells);
    const seconds = (performance.now() - t0) / 1000;
    const a = analyzeMesh(mesh);
    await field.dispose?.();
    // The least any method that contours these cells must evaluate.
    return { seconds, evaluations: cells.evaluations, surfaceCellCorners: surfaceCellCorners(cells), triangles: a.triangles, area: a.area };
  }
  if (spec.type === 'usual') {
    const field = await openField(resolve(ROOT, spec.file));
    const t0 = performance.now();
    if (!spec.slabs) {
      // The usual way done well: every lattice node in batches of about 262,144 points (the batch our
      // sampler uses; whole z-slabs per call), into one dense array, then the dense-grid marching cubes
      // (block skipping; the same mesh as ours on the same lattice).
      const lat = makeLattice(field.bounds, spec.depth);
      const [nx, ny, nz] = lat.cells;
      const slabN = (nx + 1) * (ny + 1);
      const values = new Float32Array(slabN * (nz + 1));
      const perCall = Math.max(1, Math.floor(262_144 / slabN));
      for (let k0 = 0; k0 <= nz; k0 += perCall) {
        const k1 = Math.min(nz, k0 + perCall - 1);
        values.set(await field.evaluate(latticeNodePoints(lat, k0, k1)), k0 * slabN);
      }
      const t1 = performance.now();
      const level = field.defaultLevel ?? 0;
      const h = lat.cellSize;
      const { mesh } = marchingCubesGrid(values, [nx + 1, ny + 1, nz + 1], { kind: field.kind, level, origin: lat.origin, spacing: [h, h, h] });
      const t2 = performance.now();
      const a = analyzeMesh(mesh);
      await field.dispose?.();
      return { measured: true, evaluations: values.length, batch: perCall * slabN, evalSeconds: (t1 - t0) / 1000, contourSeconds: (t2 - t1) / 1000, seconds: (t2 - t0) / 1000, triangles: a.triangles, area: a.area, peakRss: rss() };
    }
    // Extrapolated: time `slabs` z-slabs of the dense lattice and scale to all of them (evaluation only,
    // so the usual way's estimate is a lower bound).
    const lat = makeLattice(field.bounds, spec.depth);
    const [nx, ny, nz] = lat.cells;
    const t1 = performance.now();
    for (let s = 0; s < spec.slabs; s++) {
      const k = Math.floor(((s + 0.5) * (nz + 1)) / spec.slabs);
      await field.evaluate(latticeNodePoints(lat, k, k));
    }
    const per = (performance.now() - t1) / 1000 / spec.slabs;
    await field.dispose?.();
    return { measured: false, slabsTimed: spec.slabs, evaluations: (nx + 1) * (ny + 1) * (nz + 1), seconds: per * (nz + 1), note: 'extrapolated from timed slabs, evaluation only (a lower bound)' };
  }
  if (spec.type === 'inference') {
    const field = await openField(resolve(ROOT, spec.file), {}, { batchSize: spec.batch, intraOpNumThreads: spec.threads });
    const b = field.bounds;
    const pts = new Float32Array(spec.batch * 3);
    let seed = 12345;
    const rnd = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) / 4294967296);
    for (let i = 0; i < spec.batch; i++) for (let a = 0; a < 3; a++) pts[3 * i + a] = b[a] + rnd() * (b[a + 3] - b[a]);
    await field.evaluate(pts);
    let best = Infinity;
    for (let r = 0; r < 5; r++) {
      const t0 = performance.now();
      await field.evaluate(pts);
      best = Math.min(best, (performance.now() - t0) / 1000);
    }
    await field.dispose?.();
    return { pointsPerSecond: spec.batch / best, batch: spec.batch, threads: spec.threads ?? 1 };
  }
  // Dense grid: ours vs the isosurface package (in process) vs VTK flying edges (Python), same values.
  // Each side reports the best of 2 × GRID_REPEATS timed runs, taken in two rounds that alternate with the
  // other side's (ours, VTK, ours on all cores; then again), so a drift in the shared machine's speed
  // during the case reaches both sides alike. Ours first gets GRID_WARMUPS untimed runs so V8 has
  // optimized it (the first call, JIT included, is reported apart as firstCallSeconds).
  const GRID_WARMUPS = 3, GRID_REPEATS = 5, ROUNDS = 2;
  const g0 = performance.now();
  let values: Float32Array, spacing: number;
  const gridFromCache = !!spec.cache && existsSync(spec.cache);
  if (gridFromCache) {
    const bytes = readFileSync(spec.cache!);
    values = new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4);
    spacing = 2 / (spec.n - 1); // makeBenchGrid's spacing over [-1, 1]³
  } else {
    ({ values, spacing } = await makeBenchGrid(spec.shape, spec.n));
    if (spec.cache) writeFileSync(spec.cache, new Uint8Array(values.buffer, values.byteOffset, values.byteLength));
  }
  const gridSeconds = (performance.now() - g0) / 1000;
  const n = spec.n;
  const voxels = (n - 1) ** 3;
  const opts = { kind: 'sdf' as const, level: 0, origin: [-1, -1, -1] as [number, number, number], spacing: [spacing, spacing, spacing] as [number, number, number] };
  const f0 = performance.now();
  let ours = marchingCubesGrid(values, [n, n, n], opts);
  const firstCallSeconds = (performance.now() - f0) / 1000;
  for (let r = 1; r < GRID_WARMUPS; r++) ours = marchingCubesGrid(values, [n, n, n], opts);
  const timeOurs = (): number => {
    let best = Infinity;
    for (let r = 0; r < GRID_REPEATS; r++) {
      const t0 = performance.now();
      ours = marchingCubesGrid(values, [n, n, n], opts);
      best = Math.min(best, (performance.now() - t0) / 1000);
    }
    return best;
  };

  // VTK's script, run once per round on a raw copy of the values (skipped with a note when VTK is absent).
  const py = '/usr/bin/python3';
  // The script needs VTK and NumPy under Debian's Python (packages python3-vtk9 and python3-numpy; the
  // first does not pull in the second). The note names what is missing.
  const vtkMissing = !existsSync(py)
    ? `${py} is absent (Debian's python3-vtk9 and python3-numpy)`
    : ['vtk', 'numpy'].filter((m) => spawnSync(py, ['-c', `import ${m}`], { encoding: 'utf8' }).status !== 0).map((m) => `python3-${m === 'vtk' ? 'vtk9' : m}`).join(' and ');
  const vtkReady = vtkMissing === '';
  // The cache file already holds the raw values when there is one.
  const dir = spec.cache ? undefined : mkdtempSync(join(tmpdir(), 'fieldkiln-bench-'));
  const raw = spec.cache ?? join(dir!, 'grid.f32');
  if (vtkReady && !spec.cache) writeFileSync(raw, new Uint8Array(values.buffer, values.byteOffset, values.byteLength));
  const vtkRuns: Record<string, unknown>[] = [];
  let vtkError: string | undefined;
  const timeVtk = (): void => {
    if (!vtkReady || vtkError) return;
    const script = resolve(ROOT, 'test', 'bench', 'vtk_flying_edges.py');
    const r = spawnSync(py, [script, raw, String(n), String(n), String(n), '0', String(GRID_REPEATS)], { encoding: 'utf8', maxBuffer: 1 << 20 });
    if (r.status === 0) vtkRuns.push(JSON.parse(r.stdout.trim().split('\n').pop()!));
    else vtkError = `VTK script failed: ${r.stderr.slice(-300)}`;
  };

  // The same extraction on every core (app/node/marching-cubes-grid-parallel.ts), timed like ours on a
  // shared copy of the values; the copy, the pool's start-up (each worker answering a 2³ grid) and two calls on
  // the unshared array (which copy inside) are reported apart. The mesh must be ours byte for byte.
  const workers = availableParallelism();
  const sh0 = performance.now();
  const shared = shareGridValues(values);
  const shareCopySeconds = (performance.now() - sh0) / 1000;
  const st0 = performance.now();
  await startMarchingCubesGridPool(workers);
  const poolStartSeconds = (performance.now() - st0) / 1000;
  const pf0 = performance.now();
  let par = await marchingCubesGridParallel(shared, [n, n, n], opts, { workers });
  const parFirstCallSeconds = (performance.now() - pf0) / 1000;
  for (let r = 1; r < GRID_WARMUPS; r++) par = await marchingCubesGridParallel(shared, [n, n, n], opts, { workers });
  let parBest = Infinity;
  let parAtBest = par;
  const timeParallel = async (): Promise<void> => {
    for (let r = 0; r < GRID_REPEATS; r++) {
      const t0 = performance.now();
      par = await marchingCubesGridParallel(shared, [n, n, n], opts, { workers });
      const s = (performance.now() - t0) / 1000;
      if (s < parBest) [parBest, parAtBest] = [s, par];
    }
  };

  let best = Infinity;
  for (let round = 0; round < ROUNDS; round++) {
    best = Math.min(best, timeOurs());
    timeVtk();
    await timeParallel();
  }
  if (dir) rmSync(dir, { recursive: true, force: true });
  const topo = analyzeMesh(ours.mesh);

  // Unshared input twice: the first call copies into a new shared buffer, the second into the kept one.
  const unsharedSeconds: number[] = [], unsharedCopySeconds: number[] = [];
  let unshared = par;
  for (let r = 0; r < 2; r++) {
    const un0 = performance.now();
    unshared = await marchingCubesGridParallel(values, [n, n, n], opts, { workers });
    unsharedSeconds.push((performance.now() - un0) / 1000);
    unsharedCopySeconds.push(unshared.copySeconds);
  }
  await closeMarchingCubesGridPool();
  const sameBytes = (a: Float32Array | Uint32Array, b: Float32Array | Uint32Array) =>
    Buffer.compare(new Uint8Array(a.buffer, a.byteOffset, a.byteLength), new Uint8Array(b.buffer, b.byteOffset, b.byteLength)) === 0;
  const identical = [par, unshared].every((p) => sameBytes(p.mesh.positions, ours.mesh.positions) && sameBytes(p.mesh.indices, ours.mesh.indices));
  const result: Record<string, unknown> = {
    voxels,
    gridSeconds,
    gridFromCache,
    ours: {
      seconds: best, voxelsPerSecond: voxels / best, firstCallSeconds, warmups: GRID_WARMUPS, repeats: ROUNDS * GRID_REPEATS,
      triangles: topo.triangles, euler: topo.eulerCharacteristic, components: topo.components, watertight: topo.watertight, activeBlocks: ours.activeBlocks, totalBlocks: ours.totalBlocks,
    },
    oursParallel: {
      seconds: parBest, voxelsPerSecond: voxels / parBest, workers: parAtBest.workers, slabs: parAtBest.slabs, identical,
      stitchSeconds: parAtBest.stitchSeconds, workerSeconds: parAtBest.workerSeconds, firstCallSeconds: parFirstCallSeconds, poolStartSeconds,
      shareCopySeconds, unsharedSeconds, unsharedCopySeconds,
    },
  };
  if (spec.isosurface) {
    const iso = require('isosurface') as { marchingCubes(d: number[], f: (x: number, y: number, z: number) => number): { cells: number[][] } };
    const t0 = performance.now();
    const out = iso.marchingCubes([n, n, n], (x, y, z) => values[x + n * (y + n * z)]);
    const s = (performance.now() - t0) / 1000;
    result.isosurface = { seconds: s, voxelsPerSecond: voxels / s, triangles: out.cells.length };
  }
  if (!vtkReady) result.vtk = { skipped: vtkMissing.startsWith('/') ? vtkMissing : `Debian's ${vtkMissing} ${vtkMissing.includes(' and ') ? 'are' : 'is'} not installed` };
  else if (vtkError) result.vtk = { skipped: vtkError };
  else {
    const v = vtkRuns.reduce((a, b) => ((b.seconds as number) < (a.seconds as number) ? b : a));
    result.vtk = { ...v, voxelsPerSecond: voxels / (v.seconds as number), repeats: ROUNDS * GRID_REPEATS, roundSeconds: vtkRuns.map((r) => r.seconds) };
  }
  result.peakRss = rss();
  return result;
}

const spec = JSON.parse(process.argv[2]) as Spec;
run(spec).then(
  (r) => {
    process.stdout.write(JSON.stringify(r) + '\n');
    process.exit(0);
  },
  (e) => {
    process.stdout.write(JSON.stringify({ error: String((e as Error).message ?? e) }) + '\n');
    process.exit(1);
  },
);
