/**
 * Dense grids for the benchmark, made from recipes of our own: a sphere (little surface) and a busy
 * lattice of rods (a lot of surface). Evaluated once per size on the grid's nodes.
 */
import { createRecipeField } from '../../core/fields/recipe/recipe-field.js';

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

export type BenchShape = 'sphere' | 'lattice';

/** Samples the shape on n³ nodes spanning [-1, 1]³; returns the values (x fastest) and the spacing. */
export async function makeBenchGrid(shape: BenchShape, n: number): Promise<{ values: Float32Array; spacing: number }> {
  const recipe = shape === 'sphere' ? SPHERE : latticeRecipe();
  const field = createRecipeField(JSON.stringify(recipe), `${shape}.recipe.json`);
  const values = new Float32Array(n * n * n);
  const h = 2 / (n - 1);
  const slab = new Float32Array(n * n * 3);
  for (let k = 0; k < n; k++) {
    let q = 0;
    for (let j = 0; j < n; j++)
      for (let i = 0; i < n; i++) {
        slab[q++] = -1 + i * h;
        slab[q++] = -1 + j * h;
        slab[q++] = -1 + k * h;
      }
    values.set(await field.evaluate(slab), k * n * n);
  }
  return { values, spacing: h };
}
