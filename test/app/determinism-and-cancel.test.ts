/**
 * Determinism: the same input and options give byte-identical files across runs and across worker
 * counts. Cancellation: an AbortSignal stops a bake of the demo within about a second.
 */
import { resolve } from 'node:path';
import { describe, expect, test } from 'vitest';
import { openField } from '../../app/fields/open-field.js';
import { bakeField } from '../../core/pipeline/bake-field.js';
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
  test('aborting a depth-10 bake of the demo stops it within about a second', async () => {
    const field = await openField(DEMO);
    const ac = new AbortController();
    let stoppedAt = 0;
    const run = bakeField(field, { depth: 10, signal: ac.signal }).finally(() => (stoppedAt = performance.now()));
    await new Promise((r) => setTimeout(r, 1500));
    const abortedAt = performance.now();
    ac.abort();
    await expect(run).rejects.toBeInstanceOf(CancelledError);
    console.log(`stopped ${(stoppedAt - abortedAt).toFixed(0)} ms after the abort`);
    expect(stoppedAt - abortedAt).toBeLessThan(1500);
    await field.dispose?.();
  });
});
