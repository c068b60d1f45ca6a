/**
 * The worker pool gives the same values as the calling thread (bit for bit, so outputs do not depend
 * on the worker count), and a failing or crashing worker ends the request with a clear error, not a hang.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, test } from 'vitest';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { poolField, POOL_MIN_POINTS } from '../../../app/node/field-worker-pool.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';
import { rng } from '../../helpers/expect-mesh.js';

const text = readFileSync(resolve(REPO_ROOT, 'assets/demo/lantern-post.recipe.json'), 'utf8');

function randomPoints(n: number, seed: number): Float32Array {
  const r = rng(seed);
  return Float32Array.from({ length: 3 * n }, () => r() * 2 - 0.5);
}

describe('field worker pool', () => {
  test('pooled values and colors equal the single-thread ones exactly', async () => {
    const single = createRecipeField(text, 'lantern-post.recipe.json');
    const pooled = poolField(createRecipeField(text, 'lantern-post.recipe.json'), { source: 'recipe', text, name: 'lantern-post.recipe.json' }, 3);
    try {
      const pts = randomPoints(POOL_MIN_POINTS * 4 + 17, 7);
      expect(Array.from(await pooled.evaluate(pts.slice()))).toEqual(Array.from(await single.evaluate(pts.slice())));
      expect(Array.from(await pooled.evaluateColor!(pts.slice()))).toEqual(Array.from(await single.evaluateColor!(pts.slice())));
      // Small batches stay on the calling thread and agree too.
      const few = randomPoints(100, 8);
      expect(Array.from(await pooled.evaluate(few.slice()))).toEqual(Array.from(await single.evaluate(few.slice())));
    } finally {
      await pooled.dispose?.();
    }
  });

  for (const mode of ['throw', 'crash'] as const) {
    test(`a worker that ${mode === 'throw' ? 'throws' : 'crashes'} rejects the request with a clear error`, async () => {
      const base = createRecipeField(text, 'x.json');
      const pooled = poolField(base, { source: 'failing', mode }, 2);
      try {
        await expect(pooled.evaluate(randomPoints(POOL_MIN_POINTS * 2, 9))).rejects.toThrow(/field worker (failed|stopped unexpectedly)/);
        // Later requests fail at once instead of waiting.
        await expect(pooled.evaluate(randomPoints(POOL_MIN_POINTS * 2, 10))).rejects.toThrow(/field worker/);
      } finally {
        await pooled.dispose?.();
      }
    });
  }
});
