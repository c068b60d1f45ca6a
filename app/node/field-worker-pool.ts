/**
 * Evaluates a JavaScript field (recipe or grid) on all cores: large batches are split into one chunk
 * per worker thread, sent with their buffers transferred, and put back together in order. Small
 * batches stay on the calling thread, where the round trip would cost more than it saves
 * (below `POOL_MIN_POINTS`). Values are computed per point, so results do not depend on the number
 * of workers.
 *
 * A worker that throws or dies rejects every request in flight with an Error that says so; the
 * pipeline names the stage it happened in. No request waits forever.
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Field } from '../../core/fields/field.js';
import type { FieldKind } from '../../core/types.js';

export type WorkerFieldSpec =
  | { source: 'recipe'; text: string; name: string }
  | { source: 'grid'; values: SharedArrayBuffer; shape: [number, number, number]; sidecar: unknown; name: string; colors?: SharedArrayBuffer }
  | { source: 'failing'; mode: 'throw' | 'crash' };

/**
 * Below this many points a batch is evaluated on the calling thread. Chosen by measurement on the
 * 2-core machine (recipe lantern post): at 4 096 points the pool broke even, at 16 384 it was ahead.
 */
export const POOL_MIN_POINTS = 8192;

/** Default worker count: the cores Node reports. */
export const defaultWorkerCount = (): number => Math.max(1, availableParallelism());

function workerScript(): URL {
  const here = new URL('./field-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  // Running from the TypeScript sources (tests): use the compiled worker.
  return new URL('../../build/app/node/field-worker.js', import.meta.url);
}

interface Pending {
  resolve: (v: Float32Array) => void;
  reject: (e: Error) => void;
}

/**
 * Wraps `field` so that large batches run on `threads` workers that rebuild the field from `spec`.
 * `threads` ≤ 1 returns `field` itself.
 */
export function poolField(field: Field, spec: WorkerFieldSpec, threads = defaultWorkerCount()): Field & { workers: number } {
  if (threads <= 1) return Object.assign(field, { workers: 1 });
  let workers: Worker[] | null = null;
  let failure: Error | null = null;
  const pending = new Map<number, Pending>();
  let nextId = 1;
  let busy = 0;

  const fail = (e: Error) => {
    failure = e;
    for (const p of pending.values()) p.reject(e);
    pending.clear();
  };
  const start = (): Worker[] => {
    if (workers) return workers;
    workers = Array.from({ length: threads }, () => {
      const w = new Worker(workerScript(), { workerData: spec });
      w.unref();
      w.on('message', (m: { id: number; out?: Float32Array; error?: string }) => {
        const p = pending.get(m.id);
        if (!p) return;
        pending.delete(m.id);
        if (m.error !== undefined) p.reject(new Error(`a field worker failed: ${m.error}`));
        else p.resolve(m.out!);
      });
      w.on('error', (e) => fail(new Error(`a field worker failed: ${e.message}`)));
      w.on('exit', (code) => {
        if (pending.size > 0 || code !== 0) fail(new Error(`a field worker stopped unexpectedly (exit code ${code})`));
      });
      return w;
    });
    return workers;
  };
  const ask = (w: Worker, op: 'value' | 'color', points: Float32Array): Promise<Float32Array> =>
    new Promise((resolve, reject) => {
      if (failure) return reject(failure);
      const id = nextId++;
      pending.set(id, { resolve, reject });
      w.postMessage({ id, op, points }, [points.buffer as ArrayBuffer]);
    });

  const run = async (op: 'value' | 'color', points: Float32Array): Promise<Float32Array> => {
    const n = points.length / 3;
    if (failure) throw failure;
    if (n < POOL_MIN_POINTS) return op === 'color' ? field.evaluateColor!(points) : field.evaluate(points);
    const ws = start();
    const width = op === 'color' ? 3 : 1;
    const per = Math.ceil(n / ws.length);
    if (busy++ === 0) for (const w of ws) w.ref();
    try {
      const parts = await Promise.all(
        ws.map((w, i) => {
          const a = Math.min(n, i * per), b = Math.min(n, (i + 1) * per);
          return a < b ? ask(w, op, points.slice(3 * a, 3 * b)) : Promise.resolve(new Float32Array(0));
        }),
      );
      const out = new Float32Array(n * width);
      let o = 0;
      for (const p of parts) {
        out.set(p, o);
        o += p.length;
      }
      return out;
    } finally {
      if (--busy === 0 && workers) for (const w of workers) w.unref();
    }
  };

  return {
    kind: field.kind as FieldKind,
    bounds: field.bounds,
    defaultLevel: field.defaultLevel,
    hasColor: field.hasColor,
    lipschitz: field.lipschitz,
    costly: field.costly,
    samples: field.samples,
    description: { ...field.description, details: { ...(field.description.details ?? {}), workers: threads } },
    workers: threads,
    evaluate: (points) => run('value', points),
    evaluateColor: field.evaluateColor ? (points) => run('color', points) : undefined,
    async dispose() {
      const ws = workers;
      workers = null;
      failure = failure ?? new Error('the field was disposed');
      if (ws) await Promise.all(ws.map((w) => w.terminate()));
      await field.dispose?.();
    },
  };
}
