/**
 * The bake's check stage on a worker thread of its own (`BakeOptions.meshChecker`), so the scans of the
 * base level run while the calling thread evaluates the field for normals and colors.
 *
 * Measured on the 2-core VM (node 20; sphere_sdf.onnx's depth-9 mesh, 1.10M triangles, against 2M points
 * of the same network on 2 intra-op threads): inference alone 3.1–3.3 s, the checks alone 1.5–1.9 s, both
 * at once 3.97–4.14 s, so 0.6–1.1 s less than one after the other. The network slows while the checks
 * run (both cores were busy with it), the bake as a whole does not.
 */
import { Worker } from 'node:worker_threads';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { MeshChecks } from '../../core/checks/check-mesh.js';
import { CancelledError, type MeshData } from '../../core/types.js';

const NAME = 'checkMeshOffThread';

/**
 * {@link checkMesh} on a new worker thread, which ends with the call. The mesh's positions and indices are
 * copied and the copies handed to it (the caller's arrays are not changed or detached). Aborting `signal` stops the worker and
 * rejects with a CancelledError.
 *
 * @example
 * const result = await bakeField(field, { depth: 9, meshChecker: checkMeshOffThread });
 */
export function checkMeshOffThread(mesh: MeshData, signal?: AbortSignal): Promise<MeshChecks> {
  return new Promise((resolve, reject) => {
    if (signal?.aborted) return reject(new CancelledError());
    const worker = new Worker(workerScript());
    let settled = false;
    const finish = (f: () => void) => {
      if (settled) return;
      settled = true;
      signal?.removeEventListener('abort', onAbort);
      void worker.terminate();
      f();
    };
    const onAbort = () => finish(() => reject(new CancelledError()));
    signal?.addEventListener('abort', onAbort, { once: true });
    worker.on('message', (m: { result: MeshChecks } | { error: string }) =>
      finish(() => ('result' in m ? resolve(m.result) : reject(new Error(`${NAME}: the checks failed: ${m.error}`)))),
    );
    worker.on('error', (e) => finish(() => reject(new Error(`${NAME}: the worker failed: ${e.message}`))));
    worker.on('exit', (code) => finish(() => reject(new Error(`${NAME}: the worker stopped before replying (exit code ${code})`))));
    // Copies of the used parts, handed over: a structured clone of the caller's views would copy their whole
    // buffers (a mesh builder's are up to twice the mesh) through a serialized message. Measured on the
    // depth-9 sphere_sdf.onnx mesh in views over buffers twice its size: 150–220 ms and 13–20k page faults on
    // the calling thread for the clone, 3–21 ms for slice and transfer.
    const positions = mesh.positions.slice(), indices = mesh.indices.slice();
    worker.postMessage({ positions, indices }, [positions.buffer, indices.buffer]);
  });
}

function workerScript(): URL {
  const here = new URL('./check-mesh-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  // Running from the TypeScript sources (tests): use the compiled worker.
  return new URL('../../build/app/node/check-mesh-worker.js', import.meta.url);
}
