/**
 * A worker thread of check-mesh-off-thread.ts: runs core's `checkMesh` on the one mesh it is sent and
 * replies with the result (plain data) or the error's message.
 */
import { parentPort } from 'node:worker_threads';
import { checkMesh } from '../../core/checks/check-mesh.js';
import type { MeshData } from '../../core/types.js';

parentPort!.once('message', (mesh: MeshData) => {
  try {
    parentPort!.postMessage({ result: checkMesh(mesh) });
  } catch (e) {
    parentPort!.postMessage({ error: (e as Error)?.message ?? String(e) });
  }
});
