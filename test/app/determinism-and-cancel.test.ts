/**
 * Determinism: the same input and options give byte-identical files across runs and across worker
 * counts. Cancellation: an AbortSignal stops a bake of the demo within about a second, while it samples,
 * and at the check stage when the checks run on their own thread (inline, they are one synchronous call:
 * an abort then takes effect when they end).
 */
import { resolve } from 'node:path';
import { describe, expect, test } from 'vitest';
import { openField } from '../../app/fields/open-field.js';
import { bakeField, type BakeOptions } from '../../core/pipeline/bake-field.js';
import { checkMeshOffThread } from '../../app/node/check-mesh-off-thread.js';
import { CancelledError } from '../../core/types.js';
import { REPO_ROOT, fixturePath, hasFixtures } from '../helpers/fixtures.js';

const DEMO = resolve(REPO_ROOT, 'assets/demo/lantern-post.recipe.json');

async function bakeBytes(path: string, workers: number, depth: number): Promise<Uint8Array> {
  const field = await openField(path, {}, { workers });
  try {
    return (await bakeField(field, { depth })).glb!;
  } finally {
    await field.dispose?.();
  }
}

describe('determinism', () => {
  test('the demo recipe gives the same GLB bytes twice and with 1, 2 or 3 workers', async () => {
    const a = await bakeBytes(DEMO, 1, 7);
    const b = await bakeBytes(DEMO, 1, 7);
    const c = await bakeBytes(DEMO, 2, 7);
    const d = await bakeBytes(DEMO, 3, 7);
    expect(a.length).toBeGreaterThan(1000);
    expect(Buffer.compare(a, b)).toBe(0);
    expect(Buffer.compare(a, c)).toBe(0);
    expect(Buffer.compare(a, d)).toBe(0);
  });

  test.skipIf(!hasFixtures)('a grid fixture gives the same bytes with 1 and 2 workers', async () => {
    const a = await bakeBytes(fixturePath('birdbath_sdf_grid128.npy'), 1, 6);
    const b = await bakeBytes(fixturePath('birdbath_sdf_grid128.npy'), 2, 6);
    expect(Buffer.compare(a, b)).toBe(0);
  });
});

describe('cancellation', () => {
  // The abort is sent 100 ms after the bake reports a stage chosen in advance, so the test does not
  // depend on how far a fixed delay gets on a given machine (a fixed 1.5 s once landed after a warm bake
  // had finished). The outcome is kept small: a finished bake's report is not printed.
  const abortAt = async (when: (stage: string, fraction: number) => boolean, options: Partial<BakeOptions> = {}) => {
    const field = await openField(DEMO);
    const ac = new AbortController();
    let abortedAt = 0, armed = false;
    const stages: string[] = [];
    const run = bakeField(field, {
      depth: 10,
      signal: ac.signal,
      ...options,
      onProgress: (stage, fraction) => {
        if (stages.at(-1) !== stage) stages.push(stage);
        // From a timer, as a user's click arrives: while the stage is under way, not at its report.
        if (!armed && when(stage, fraction)) {
          armed = true;
          setTimeout(() => {
            abortedAt = performance.now();
            ac.abort();
          }, 100);
        }
      },
    });
    const outcome = await run.then(
      () => 'finished',
      (e: unknown) => e,
    );
    const latency = performance.now() - abortedAt;
    await field.dispose?.();
    return { outcome, latency, stages };
  };

  test('aborting a depth-10 bake of the demo while it samples stops it within about a second', async () => {
    const { outcome, latency, stages } = await abortAt((stage, fraction) => stage === 'sample' && fraction >= 0.5);
    expect(outcome).toBeInstanceOf(CancelledError);
    console.log(`stopped ${latency.toFixed(0)} ms after the abort`);
    expect(latency).toBeLessThan(1000);
    expect(stages).toEqual(['sample']);
  });

  test('aborting at the check stage with the checks on their own thread (as the CLI bakes) stops it within about a second', async () => {
    const { outcome, latency, stages } = await abortAt((stage) => stage === 'check', { meshChecker: checkMeshOffThread });
    expect(outcome).toBeInstanceOf(CancelledError);
    console.log(`stopped ${latency.toFixed(0)} ms after the abort at the check stage`);
    expect(latency).toBeLessThan(1000);
    expect(stages.at(-1)).toBe('check');
  });
});
