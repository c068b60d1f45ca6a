/**
 * A worker thread of marching-cubes-grid-parallel.ts, in two steps per slab of a dense grid whose samples
 * lie in a SharedArrayBuffer:
 * 1. `extract`: runs core's `marchingCubesGridLayers` on the slab, keeps the mesh under the request's `keep`
 *    token and replies with its counts and end-plane vertices only;
 * 2. `write`: copies the kept positions, except the vertices the slab below also made, and the indices,
 *    renumbered, straight into the whole mesh's shared output buffers at the offsets it is given; then
 *    frees the token.
 * So no slab's mesh is copied or sent, and the calling thread does not stitch. The scratch buffers of
 * finished slabs are reused by later ones.
 */
import { parentPort } from 'node:worker_threads';
import { marchingCubesGridLayers, type GridLayersScratch, type MarchingCubesGridOptions } from '../../core/meshing/marching-cubes-grid.js';

/** Step 1: extract block layers [layer0, layer1) of the grid in `values` (a Float32Array's range) and keep the mesh. */
export interface GridSlabRequest {
  id: number;
  step: 'extract';
  /** Names the kept mesh for step 2; unique among this worker's kept meshes. */
  keep: number;
  values: SharedArrayBuffer;
  byteOffset: number;
  dims: [number, number, number];
  options: MarchingCubesGridOptions;
  layer0: number;
  layer1: number;
}

/**
 * Step 2: write kept mesh `keep` into `positions` (3 floats per vertex) from vertex `vertexOffset` on and
 * into `indices` from `indexOffset` on. Local vertex `sharedLocal[q]` (ascending) is global vertex
 * `sharedGlobal[q]` and is not written; every other local vertex l gets vertexOffset + l − (shared below l).
 */
export interface GridWriteRequest {
  id: number;
  step: 'write';
  keep: number;
  positions: SharedArrayBuffer;
  indices: SharedArrayBuffer;
  vertexOffset: number;
  indexOffset: number;
  sharedLocal: Int32Array;
  sharedGlobal: Int32Array;
}

export type GridSlabReply =
  | {
      id: number;
      vertexCount: number;
      indexCount: number;
      bottomEdges: Int32Array;
      topEdges: Int32Array;
      surfaceCells: number;
      activeBlocks: number;
      /** Seconds the extraction took in the worker. */
      seconds: number;
    }
  | { id: number; written: true; seconds: number }
  | { id: number; error: string };

/** Kept meshes by token, and scratch buffers free for the next slab (see GridLayersScratch). */
const kept = new Map<number, { positions: Float32Array; indices: Uint32Array; scratch: GridLayersScratch }>();
const freeScratch: GridLayersScratch[] = [];

function extract(msg: GridSlabRequest): GridSlabReply {
  const t0 = performance.now();
  const [nx, ny, nz] = msg.dims;
  const values = new Float32Array(msg.values, msg.byteOffset, nx * ny * nz);
  const scratch = freeScratch.pop() ?? {};
  const r = marchingCubesGridLayers(values, msg.dims, msg.options, msg.layer0, msg.layer1, scratch, false);
  const old = kept.get(msg.keep);
  if (old) freeScratch.push(old.scratch);
  kept.set(msg.keep, { positions: r.mesh.positions, indices: r.mesh.indices, scratch });
  return {
    id: msg.id,
    vertexCount: r.mesh.positions.length / 3,
    indexCount: r.mesh.indices.length,
    bottomEdges: r.bottomEdges,
    topEdges: r.topEdges,
    surfaceCells: r.surfaceCells,
    activeBlocks: r.activeBlocks,
    seconds: (performance.now() - t0) / 1000,
  };
}

function write(msg: GridWriteRequest): GridSlabReply {
  const t0 = performance.now();
  const k = kept.get(msg.keep);
  if (!k) throw new Error(`no kept slab ${msg.keep}`);
  kept.delete(msg.keep);
  freeScratch.push(k.scratch);
  const { positions: src, indices: srcIdx } = k;
  const V = src.length / 3;
  const outPos = new Float32Array(msg.positions);
  const outIdx = new Uint32Array(msg.indices);
  const id = new Int32Array(V);
  let q = 0, g = msg.vertexOffset, runStart = 0;
  // New vertices in runs between the shared ones.
  for (let v = 0; v <= V; v++) {
    const isShared = v < V && q < msg.sharedLocal.length && msg.sharedLocal[q] === v;
    if (v < V && !isShared) continue;
    if (v > runStart) {
      outPos.set(src.subarray(3 * runStart, 3 * v), 3 * g);
      for (let u = runStart; u < v; u++) id[u] = g++;
    }
    if (isShared) id[v] = msg.sharedGlobal[q++];
    runStart = v + 1;
  }
  for (let t = 0, o = msg.indexOffset; t < srcIdx.length; t++, o++) outIdx[o] = id[srcIdx[t]];
  return { id: msg.id, written: true, seconds: (performance.now() - t0) / 1000 };
}

parentPort!.on('message', (msg: GridSlabRequest | GridWriteRequest) => {
  try {
    parentPort!.postMessage(msg.step === 'extract' ? extract(msg) : write(msg));
  } catch (e) {
    parentPort!.postMessage({ id: msg.id, error: (e as Error)?.message ?? String(e) } satisfies GridSlabReply);
  }
});
