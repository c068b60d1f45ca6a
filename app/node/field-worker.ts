/**
 * A worker thread that holds its own copy of a JavaScript field (a recipe, or a grid whose samples
 * arrive in a SharedArrayBuffer) and evaluates the chunks of points it is sent. Started by
 * field-worker-pool.ts; replies transfer their buffers.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { createRecipeField } from '../../core/fields/recipe/recipe-field.js';
import { createGridField } from '../../core/fields/grid-field.js';
import type { Field } from '../../core/fields/field.js';
import type { WorkerFieldSpec } from './field-worker-pool.js';

function build(spec: WorkerFieldSpec): Field {
  if (spec.source === 'recipe') return createRecipeField(spec.text, spec.name);
  if (spec.source === 'grid') {
    return createGridField({
      values: new Float32Array(spec.values),
      shape: spec.shape,
      sidecar: spec.sidecar,
      name: spec.name,
      colors: spec.colors ? new Float32Array(spec.colors) : undefined,
    });
  }
  // Test hook: a field that fails, to check that a failing worker ends the job with a clear error.
  return {
    kind: 'sdf',
    bounds: [-1, -1, -1, 1, 1, 1],
    defaultLevel: 0,
    hasColor: false,
    description: { source: 'test', name: 'failing', outputs: ['sdf'] },
    async evaluate() {
      if (spec.mode === 'crash') process.exit(3);
      throw new Error('injected failure');
    },
  };
}

const field = build(workerData as WorkerFieldSpec);
parentPort!.on('message', async (msg: { id: number; op: 'value' | 'color'; points: Float32Array }) => {
  try {
    let out = msg.op === 'color' ? await field.evaluateColor!(msg.points) : await field.evaluate(msg.points);
    if (out.byteOffset !== 0 || out.byteLength !== out.buffer.byteLength) out = out.slice();
    parentPort!.postMessage({ id: msg.id, out }, [out.buffer as ArrayBuffer]);
  } catch (e) {
    parentPort!.postMessage({ id: msg.id, error: (e as Error)?.message ?? String(e) });
  }
});
