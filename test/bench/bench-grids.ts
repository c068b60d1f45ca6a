/**
 * Dense grids for the benchmark, made from recipes of our own: a sphere (little surface), a busy lattice
 * of rods (a lot of surface) and a prop (the demo lantern post: thin parts, smooth blends, a cut-out
 * lamp cage). Evaluated once per size on the grid's nodes, a batch of z-planes at a time, on every core
 * through the field worker pool (values are computed per point, so they do not depend on the worker count).
 * Measured on the shared 2-core machine: the 512³ lattice took 174 s with the pool (load ≈ 4); one
 * thread took 14 s for the 256³ lattice when the machine was quieter.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { createRecipeField } from '../../core/fields/recipe/recipe-field.js';
import { poolField } from '../../app/node/field-worker-pool.js';

const ROOT = resolve(new URL('.', import.meta.url).pathname, '..', '..', '..');

const SPHERE = { format: 'fieldkiln-recipe', version: 1, name: 'bench sphere', bounds: [-1, -1, -1, 1, 1, 1], root: { type: 'sphere', radius: 0.8 } };

function latticeRecipe() {
  const rods: Record<string, unknown>[] = [];
  const offsets = [-0.6, -0.3, 0, 0.3, 0.6];
  for (const a of offsets)
    for (const b of offsets) {
      rods.push({ type: 'cylinder', radius: 0.06, height: 1.8, translate: [a, 0, b] });
      rods.push({ type: 'cylinder', radius: 0.06, height: 1.8, rotate: { axis: [0, 0, 1], degrees: 90 }, translate: [0, a, b] });
      rods.push({ type: 'cylinder', radius: 0.06, height: 1.8, rotate: { axis: [1, 0, 0], degrees: 90 }, translate: [a, b, 0] });
    }
  return { format: 'fieldkiln-recipe', version: 1, name: 'bench lattice', bounds: [-1, -1, -1, 1, 1, 1], root: { type: 'union', children: rods } };
}

/**
 * The demo lantern post (assets/demo/lantern-post.recipe.json, bounds x −0.3…0.4, y −0.05…1.95, z ±0.3)
 * scaled by 0.9 and centred, so it spans y −0.9…0.9 inside [-1, 1]³.
 */
function propRecipe() {
  const lantern = JSON.parse(readFileSync(resolve(ROOT, 'assets/demo/lantern-post.recipe.json'), 'utf8')) as { root: Record<string, unknown> };
  const s = 0.9;
  const centre = [0.05, 0.95, 0];
  return {
    format: 'fieldkiln-recipe',
    version: 1,
    name: 'bench prop (lantern post)',
    bounds: [-1, -1, -1, 1, 1, 1],
    root: { type: 'union', scale: s, translate: centre.map((c) => -s * c), children: [lantern.root] },
  };
}

export type BenchShape = 'sphere' | 'lattice' | 'prop';
export const BENCH_SHAPES: readonly BenchShape[] = ['sphere', 'lattice', 'prop'];

/** Points per batch sent to the pool: a few million, whole z-planes. */
const BATCH_POINTS = 1 << 22;

/** Samples the shape on n³ nodes spanning [-1, 1]³; returns the values (x fastest) and the spacing. */
export async function makeBenchGrid(shape: BenchShape, n: number): Promise<{ values: Float32Array; spacing: number }> {
  if (!BENCH_SHAPES.includes(shape)) throw new Error(`makeBenchGrid: unknown shape ${JSON.stringify(shape)} (expected ${BENCH_SHAPES.join(', ')})`);
  const recipe = shape === 'sphere' ? SPHERE : shape === 'lattice' ? latticeRecipe() : propRecipe();
  const text = JSON.stringify(recipe);
  const name = `${shape}.recipe.json`;
  const field = poolField(createRecipeField(text, name), { source: 'recipe', text, name });
  try {
    const values = new Float32Array(n * n * n);
    const h = 2 / (n - 1);
    const planes = Math.max(1, Math.floor(BATCH_POINTS / (n * n)));
    for (let k0 = 0; k0 < n; k0 += planes) {
      const k1 = Math.min(n, k0 + planes);
      const pts = new Float32Array((k1 - k0) * n * n * 3);
      let q = 0;
      for (let k = k0; k < k1; k++)
        for (let j = 0; j < n; j++)
          for (let i = 0; i < n; i++) {
            pts[q++] = -1 + i * h;
            pts[q++] = -1 + j * h;
            pts[q++] = -1 + k * h;
          }
      values.set(await field.evaluate(pts), k0 * n * n);
    }
    return { values, spacing: h };
  } finally {
    await field.dispose?.();
  }
}
