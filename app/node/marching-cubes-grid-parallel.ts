/**
 * Dense-grid marching cubes on all cores, giving the same mesh as core's `marchingCubesGrid` byte for
 * byte (same positions, same indices, same order).
 *
 * - The grid is cut in z into slabs of whole block layers (core's blocks of `blockSize`³ cells). Worker
 *   threads take slabs from a queue, so a slab with more surface does not hold the others up, and extract
 *   each with core's `marchingCubesGridLayers`: the same cell order and first-touch vertex numbering as the
 *   whole-grid pass, plus the vertices each slab made on the edges of its bottom and top planes.
 * - Two steps per slab. The workers extract their slabs and keep the meshes, replying with counts and the
 *   vertices on the slab's end planes. The calling thread then only numbers: a slab's bottom-plane vertex is
 *   the one the slab below made on its top plane for the same edge (the single-threaded pass would have
 *   taken it from there), every other vertex gets the next id, and each slab's triangles follow the slab
 *   below's. The workers write their positions and renumbered indices straight into the output, two
 *   SharedArrayBuffers, so positions and indices equal the whole-grid pass. Before, each slab's mesh was
 *   copied, sent, and stitched on the calling thread: 15–35 ms of a 60 ms call on the 256³ sphere, for
 *   fresh output memory the calling thread alone faulted in. Interleaved A/B, 2 workers, 256³ grids, best
 *   (median) ms, old against new: sphere 33 (47) / 30 (41), prop 11 (14) / 11 (14), lattice 81 (154) /
 *   69 (74); keeping freed heap, lattice 111 (115) / 91 (103).
 * - The mesh's arrays are views over SharedArrayBuffers: they can be shared with other threads but not
 *   transferred.
 * - The samples reach the workers through a SharedArrayBuffer. A caller whose array is not shared pays one
 *   copy per call (reported as `copySeconds`) into a shared buffer kept for the next call (see `spare`);
 *   {@link shareGridValues} makes a shared copy a caller can keep and pass again.
 * - The workers are started once and kept (a pool per process, grown on demand), so a call pays only the
 *   messages. They do not keep the process alive while idle; {@link closeMarchingCubesGridPool} ends them.
 *
 * Measured on the 2-core VM (256³ bench grids, 2 workers, best of 5, `npm run bench`'s grid case; the
 * cores were busy with other work at the time, so figures move by 2× from run to run):
 * - start-up: 0.09–0.20 s for the pool to start and each worker to answer once; the first real call then
 *   runs unoptimized code in each worker (0.35–0.95 s on 256³ against 0.09–0.36 s warm).
 * - copying unshared input: 200–300 ms into a new 64 MB SharedArrayBuffer (new pages are dear on this VM),
 *   5–6 ms into the kept one.
 * - workers keep their scratch buffers between slabs (core's GridLayersScratch): a worker thread's
 *   allocator handed back and re-faulted them per slab (8 lattice slabs in turn in one worker: 188–300 ms
 *   without, 171–181 ms with).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { GridExtraction, MarchingCubesGridOptions } from '../../core/meshing/marching-cubes-grid.js';
import { FIELD_KINDS } from '../../core/types.js';
import type { GridSlabReply, GridSlabRequest, GridWriteRequest } from './marching-cubes-grid-worker.js';

const NAME = 'marchingCubesGridParallel';

/** Options for {@link marchingCubesGridParallel} (how to split the work; the mesh does not depend on them). */
export interface ParallelGridOptions {
  /** Worker threads to use. Default: `os.availableParallelism()`. */
  workers?: number;
  /**
   * Slabs to cut the grid into (at most one per block layer). Default: 1 for one worker, else
   * `SLABS_PER_WORKER` per worker.
   */
  slabs?: number;
}

/**
 * Slabs per worker by default. More slabs even out the load (the tail waits for at most one slab, and a
 * worker slowed by other processes takes fewer) but each costs clearing a ring of node ids (1.5 MB for a
 * 256² plane), re-reading one plane and a message. Measured on the 2-core VM, 2 workers, 256³ sphere /
 * prop / lattice, 8 interleaved calls each, best (median) ms: 2 slabs 50 (54) / 14 (15) / 145 (253),
 * 4 slabs 52 (61) / 16 (21) / 116 (149), 8 slabs 56 (61) / 18 (22) / 136 (272), 16 slabs 59 (71) /
 * 24 (27) / 131 (153). Two per worker keeps most of one slab's speed and some room for an uneven core.
 */
export const SLABS_PER_WORKER = 2;

export interface ParallelGridExtraction extends GridExtraction {
  workers: number;
  slabs: number;
  /** Seconds spent copying `values` into shared memory (0 when it already was shared). */
  copySeconds: number;
  /** Seconds the calling thread spent numbering the slabs and making the output buffers (the workers fill them). */
  stitchSeconds: number;
  /** Seconds the workers spent extracting, summed over slabs (wall time × workers when they never wait). */
  workerSeconds: number;
}

/** A copy of `values` in a SharedArrayBuffer, to pass to {@link marchingCubesGridParallel} without a copy per call. */
export function shareGridValues(values: Float32Array): Float32Array {
  const shared = new Float32Array(new SharedArrayBuffer(values.byteLength));
  shared.set(values);
  return shared;
}

/**
 * Extracts the level set of `values` (C order, shape [nz, ny, nx]: x fastest; `dims` = [nx, ny, nz]) on
 * worker threads. The mesh equals `marchingCubesGrid(values, dims, options).mesh` byte for byte, as do
 * `surfaceCells`, `activeBlocks` and `totalBlocks`, whatever `parallel` says.
 *
 * @example
 * const { mesh } = await marchingCubesGridParallel(values, [257, 257, 257], { kind: 'sdf', level: 0, origin: [-1, -1, -1], spacing: [h, h, h] });
 */
export async function marchingCubesGridParallel(
  values: Float32Array,
  dims: [number, number, number],
  options: MarchingCubesGridOptions,
  parallel: ParallelGridOptions = {},
): Promise<ParallelGridExtraction> {
  if (!(values instanceof Float32Array)) throw new Error(`${NAME}: values must be a Float32Array`);
  if (!Array.isArray(dims) || dims.length !== 3 || !dims.every((d) => Number.isInteger(d)))
    throw new Error(`${NAME}: dims must be three whole numbers [nx, ny, nz], got ${JSON.stringify(dims)}`);
  const [nx, ny, nz] = dims;
  if (nx < 2 || ny < 2 || nz < 2) throw new Error(`${NAME}: every axis needs at least 2 samples, got ${nx}×${ny}×${nz}`);
  if (values.length !== nx * ny * nz) throw new Error(`${NAME}: ${values.length} values for ${nx}×${ny}×${nz} samples`);
  if (!options || !FIELD_KINDS.includes(options.kind)) throw new Error(`${NAME}: options.kind must be one of ${FIELD_KINDS.join(', ')}, got ${JSON.stringify(options?.kind)}`);
  if (typeof options.level !== 'number') throw new Error(`${NAME}: options.level must be a number`);
  for (const key of ['origin', 'spacing'] as const) {
    const a = options[key];
    if (!Array.isArray(a) || a.length !== 3 || !a.every((x) => typeof x === 'number')) throw new Error(`${NAME}: options.${key} must be three numbers [x, y, z], got ${JSON.stringify(a)}`);
  }
  const B = options.blockSize ?? 8;
  if (!Number.isInteger(B) || B < 1) throw new Error(`${NAME}: blockSize must be a whole number ≥ 1, got ${B}`);
  const workers = parallel.workers ?? Math.max(1, availableParallelism());
  if (!Number.isInteger(workers) || workers < 1) throw new Error(`${NAME}: workers must be a whole number ≥ 1, got ${workers}`);
  const cx = nx - 1, cy = ny - 1, cz = nz - 1;
  const bx = Math.ceil(cx / B), by = Math.ceil(cy / B), bz = Math.ceil(cz / B);
  const wanted = parallel.slabs ?? (workers === 1 ? 1 : workers * SLABS_PER_WORKER);
  if (!Number.isInteger(wanted) || wanted < 1) throw new Error(`${NAME}: slabs must be a whole number ≥ 1, got ${wanted}`);
  const slabs = Math.min(wanted, bz);

  let copySeconds = 0;
  let shared = values;
  let scratch: SharedArrayBuffer | null = null;
  if (!(values.buffer instanceof SharedArrayBuffer)) {
    const t0 = performance.now();
    scratch = takeScratch(values.byteLength);
    shared = new Float32Array(scratch, 0, values.length);
    shared.set(values);
    copySeconds = (performance.now() - t0) / 1000;
  }
  // Only what the workers need, as plain data (the caller's object may carry other things).
  const opts: MarchingCubesGridOptions = { kind: options.kind, level: options.level, origin: [...options.origin], spacing: [...options.spacing], blockSize: B };

  // Slab s covers block layers [edge[s], edge[s + 1]): as even a split of the layers as whole layers allow.
  const edge = Array.from({ length: slabs + 1 }, (_, s) => Math.round((s * bz) / slabs));
  const pool = takeWorkers(Math.min(workers, slabs));
  const replies: SlabCounts[] = new Array(slabs);
  const holder: { worker: GridWorker; keep: number }[] = new Array(slabs);
  let stitchSeconds = 0, workerSeconds = 0;
  let mesh: { positions: Float32Array; indices: Uint32Array };
  let next = 0;
  try {
    // Step 1: each worker extracts slabs from the queue and keeps their meshes.
    await Promise.all(
      pool.map(async (w) => {
        try {
          while (next < slabs) {
            const s = next++;
            const keep = w.nextKeep++;
            holder[s] = { worker: w, keep };
            replies[s] = await w.extract({ step: 'extract', keep, values: shared.buffer as SharedArrayBuffer, byteOffset: shared.byteOffset, dims: [nx, ny, nz], options: opts, layer0: edge[s], layer1: edge[s + 1] });
          }
        } catch (e) {
          next = slabs; // the others stop after their current slab
          throw e;
        }
      }),
    );
    // The calling thread only numbers: where each slab's vertices and indices go, and which of its vertices
    // the slab below made. Step 2: each worker writes its slabs there.
    const t0 = performance.now();
    const plan = planSlabs(replies, nx * ny);
    const posBuffer = new SharedArrayBuffer(12 * plan.vertexCount);
    const idxBuffer = new SharedArrayBuffer(4 * plan.indexCount);
    stitchSeconds = (performance.now() - t0) / 1000;
    const written = await Promise.all(
      replies.map((_, s) =>
        holder[s].worker.write({ step: 'write', keep: holder[s].keep, positions: posBuffer, indices: idxBuffer, vertexOffset: plan.vertexOffset[s], indexOffset: plan.indexOffset[s], sharedLocal: plan.sharedLocal[s], sharedGlobal: plan.sharedGlobal[s] }),
      ),
    );
    for (const w of written) workerSeconds += w.seconds;
    mesh = { positions: new Float32Array(posBuffer), indices: new Uint32Array(idxBuffer) };
  } finally {
    releaseWorkers(pool);
    if (scratch) giveBackScratch(scratch);
  }
  let surfaceCells = 0, activeBlocks = 0;
  for (const r of replies) {
    surfaceCells += r.surfaceCells;
    activeBlocks += r.activeBlocks;
    workerSeconds += r.seconds;
  }
  return { mesh, surfaceCells, activeBlocks, totalBlocks: bx * by * bz, workers: pool.length, slabs, copySeconds, stitchSeconds, workerSeconds };
}

type SlabCounts = Extract<GridSlabReply, { vertexCount: number }>;
type SlabWritten = Extract<GridSlabReply, { written: true }>;

/**
 * Where each slab's mesh goes in the whole one, in z order. Slab s's vertex is either a bottom-plane vertex
 * that slab s − 1 also made (it takes that vertex's id: `sharedLocal[s]`, ascending, to `sharedGlobal[s]`) or
 * a new one (the next id, in the slab's own order), so ids follow the whole-grid pass's first-touch order;
 * its triangles keep their order after those of the slabs below.
 */
function planSlabs(slabs: SlabCounts[], nxy: number) {
  const n = slabs.length;
  const vertexOffset = new Array<number>(n), indexOffset = new Array<number>(n);
  const sharedLocal: Int32Array[] = new Array(n), sharedGlobal: Int32Array[] = new Array(n);
  // Global id of the vertex on each edge of the plane between slab s − 1 and s, by edge key (2·node + axis); -1 where none.
  const below = new Int32Array(2 * nxy).fill(-1);
  let vertexCount = 0, indexCount = 0;
  for (let s = 0; s < n; s++) {
    const r = slabs[s];
    const bottom = r.bottomEdges;
    const pairs: [number, number][] = [];
    for (let q = 0; q < bottom.length; q += 2) {
      const g = below[bottom[q]];
      if (g >= 0) pairs.push([bottom[q + 1], g]);
    }
    if (s > 0) for (let q = 0; q < slabs[s - 1].topEdges.length; q += 2) below[slabs[s - 1].topEdges[q]] = -1;
    pairs.sort((a, b) => a[0] - b[0]);
    sharedLocal[s] = Int32Array.from(pairs, (p) => p[0]);
    sharedGlobal[s] = Int32Array.from(pairs, (p) => p[1]);
    vertexOffset[s] = vertexCount;
    indexOffset[s] = indexCount;
    // Global ids of this slab's top-plane vertices, for the slab above: none of them is a bottom-plane one.
    const top = r.topEdges;
    const local = sharedLocal[s];
    for (let q = 0; q < top.length; q += 2) {
      const l = top[q + 1];
      below[top[q]] = vertexCount + l - lowerCount(local, l);
    }
    vertexCount += r.vertexCount - pairs.length;
    indexCount += r.indexCount;
  }
  return { vertexOffset, indexOffset, sharedLocal, sharedGlobal, vertexCount, indexCount };
}

/** How many entries of ascending `a` are below `x`. */
function lowerCount(a: Int32Array, x: number): number {
  let lo = 0, hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

// ---- The worker pool: started once per process, reused by every call. ----

class GridWorker {
  private readonly worker: Worker;
  private readonly pending = new Map<number, { resolve: (r: GridSlabReply) => void; reject: (e: Error) => void }>();
  private nextId = 1;
  /** Token for the next mesh this worker keeps between the two steps. */
  nextKeep = 1;
  busy = 0;
  dead = false;

  constructor() {
    this.worker = new Worker(workerScript());
    this.worker.unref();
    this.worker.on('message', (m: GridSlabReply) => {
      const p = this.pending.get(m.id);
      if (!p) return;
      this.pending.delete(m.id);
      if ('error' in m) p.reject(new Error(`${NAME}: a worker failed: ${m.error}`));
      else p.resolve(m);
    });
    this.worker.on('error', (e) => this.fail(new Error(`${NAME}: a worker failed: ${e.message}`)));
    this.worker.on('exit', (code) => this.fail(new Error(`${NAME}: a worker stopped unexpectedly (exit code ${code})`)));
  }

  async extract(job: Omit<GridSlabRequest, 'id'>): Promise<SlabCounts> {
    return (await this.ask(job)) as SlabCounts;
  }

  async write(job: Omit<GridWriteRequest, 'id'>): Promise<SlabWritten> {
    return (await this.ask(job)) as SlabWritten;
  }

  private ask(job: Omit<GridSlabRequest, 'id'> | Omit<GridWriteRequest, 'id'>): Promise<GridSlabReply> {
    return new Promise((resolve, reject) => {
      if (this.dead) return reject(new Error(`${NAME}: a worker stopped unexpectedly`));
      const id = this.nextId++;
      this.pending.set(id, { resolve, reject });
      this.worker.postMessage({ ...job, id });
    });
  }

  ref(on: boolean): void {
    if (on) this.worker.ref();
    else this.worker.unref();
  }

  terminate(): Promise<number> {
    this.dead = true;
    return this.worker.terminate();
  }

  private fail(e: Error): void {
    this.dead = true;
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
    const at = POOL.indexOf(this);
    if (at >= 0) POOL.splice(at, 1);
  }
}

const POOL: GridWorker[] = [];

/**
 * The shared copy of the last unshared input, kept for the next call: a large new buffer costs its page
 * faults on first write, and on the 2-core VM those dominated the copy (a 64 MB copy, 256³ floats: 210–290 ms
 * into a new SharedArrayBuffer; into a reused one, see the report). Held until the pool is closed; a call
 * that finds it busy or too small makes its own.
 */
let spare: SharedArrayBuffer | null = null;

function takeScratch(bytes: number): SharedArrayBuffer {
  const s = spare;
  if (s && s.byteLength >= bytes) {
    spare = null;
    return s;
  }
  return new SharedArrayBuffer(bytes);
}

function giveBackScratch(s: SharedArrayBuffer): void {
  if (!spare || spare.byteLength < s.byteLength) spare = s;
}

function workerScript(): URL {
  const here = new URL('./marching-cubes-grid-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  // Running from the TypeScript sources (tests): use the compiled worker.
  return new URL('../../build/app/node/marching-cubes-grid-worker.js', import.meta.url);
}

/** `n` workers of the pool, least busy first, starting more when the pool is smaller; held until released. */
function takeWorkers(n: number): GridWorker[] {
  while (POOL.length < n) POOL.push(new GridWorker());
  const chosen = [...POOL].sort((a, b) => a.busy - b.busy).slice(0, n);
  for (const w of chosen) if (w.busy++ === 0) w.ref(true);
  return chosen;
}

function releaseWorkers(ws: GridWorker[]): void {
  for (const w of ws) if (--w.busy === 0 && !w.dead) w.ref(false);
}

/**
 * Starts the pool's workers up to `workers` and waits until each has answered once (a 2³ grid), so a
 * caller can pay the start-up before the first real call. Default: `os.availableParallelism()`.
 */
export async function startMarchingCubesGridPool(workers = Math.max(1, availableParallelism())): Promise<void> {
  if (!Number.isInteger(workers) || workers < 1) throw new Error(`startMarchingCubesGridPool: workers must be a whole number ≥ 1, got ${workers}`);
  const ws = takeWorkers(workers);
  const tiny = new Float32Array(new SharedArrayBuffer(32));
  try {
    await Promise.all(
      ws.map(async (w) => {
        const keep = w.nextKeep++;
        await w.extract({ step: 'extract', keep, values: tiny.buffer as SharedArrayBuffer, byteOffset: 0, dims: [2, 2, 2], options: { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1] }, layer0: 0, layer1: 1 });
        const none = new SharedArrayBuffer(4);
        await w.write({ step: 'write', keep, positions: none, indices: none, vertexOffset: 0, indexOffset: 0, sharedLocal: new Int32Array(0), sharedGlobal: new Int32Array(0) });
      }),
    );
  } finally {
    releaseWorkers(ws);
  }
}

/**
 * Ends the pool's workers (a later call starts new ones) and drops the kept copy of unshared input.
 * Calls in flight fail with a clear error.
 */
export async function closeMarchingCubesGridPool(): Promise<void> {
  spare = null;
  const ws = POOL.splice(0);
  await Promise.all(ws.map((w) => w.terminate()));
}

/** Workers started so far and alive (for tests and the bench). */
export function marchingCubesGridPoolSize(): number {
  return POOL.length;
}
