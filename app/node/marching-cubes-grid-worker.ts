/**
 * A worker thread of marching-cubes-grid-parallel.ts: it is sent z-slabs of a dense grid whose samples lie
 * in a SharedArrayBuffer, extracts each with core's `marchingCubesGridLayers`, and replies with the slab's
 * mesh and its end-plane vertices, buffers transferred. Between slabs it keeps only its scratch buffers.
 */
import { parentPort } from 'node:worker_threads';
import { marchingCubesGridLayers, type GridLayersScratch, type MarchingCubesGridOptions } from '../../core/meshing/marching-cubes-grid.js';

/** One slab to extract: block layers [layer0, layer1) of the grid in `values` (a Float32Array's range). */
export interface GridSlabRequest {
  id: number;
  values: SharedArrayBuffer;
  byteOffset: number;
  dims: [number, number, number];
  options: MarchingCubesGridOptions;
  layer0: number;
  layer1: number;
}

export type GridSlabReply =
  | {
      id: number;
      positions: Float32Array;
      indices: Uint32Array;
      bottomEdges: Int32Array;
      topEdges: Int32Array;
      surfaceCells: number;
      activeBlocks: number;
      /** Seconds the extraction took in the worker. */
      seconds: number;
    }
  | { id: number; error: string };

/** Kept across slabs and calls (see GridLayersScratch): the id ring (1.5 MB for 256² planes) and the mesh buffers. */
const scratch: GridLayersScratch = {};

parentPort!.on('message', (msg: GridSlabRequest) => {
  try {
    const t0 = performance.now();
    const [nx, ny, nz] = msg.dims;
    const values = new Float32Array(msg.values, msg.byteOffset, nx * ny * nz);
    const r = marchingCubesGridLayers(values, msg.dims, msg.options, msg.layer0, msg.layer1, scratch);
    const { positions, indices } = r.mesh;
    const reply: GridSlabReply = { id: msg.id, positions, indices, bottomEdges: r.bottomEdges, topEdges: r.topEdges, surfaceCells: r.surfaceCells, activeBlocks: r.activeBlocks, seconds: (performance.now() - t0) / 1000 };
    parentPort!.postMessage(reply, [positions.buffer, indices.buffer, r.bottomEdges.buffer, r.topEdges.buffer] as ArrayBuffer[]);
  } catch (e) {
    parentPort!.postMessage({ id: msg.id, error: (e as Error)?.message ?? String(e) } satisfies GridSlabReply);
  }
});
