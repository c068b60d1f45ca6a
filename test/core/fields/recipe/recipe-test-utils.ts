/** Helpers shared by the recipe tests: build recipe text, evaluate at a few points, seeded random numbers. */
import { compileRecipe } from '../../../../core/fields/recipe/compile-recipe.js';
import { parseRecipe } from '../../../../core/fields/recipe/parse-recipe.js';

/** A recipe document around `root`, with optional top-level extras (bounds, name). */
export function recipeText(root: unknown, extra: Record<string, unknown> = {}): string {
  return JSON.stringify({ format: 'fieldkiln-recipe', version: 1, ...extra, root }, null, 2);
}

/** Signed distances of the recipe around `root` at `points` (float64 in, float32 out). */
export function distancesAt(root: unknown, points: number[][], extra: Record<string, unknown> = {}): number[] {
  const f = compileRecipe(parseRecipe(recipeText(root, extra)));
  const out = new Float32Array(points.length);
  f.distance(Float32Array.from(points.flat()), out);
  return [...out];
}

/** Colors (3 per point) of the recipe around `root` at `points`. */
export function colorsAt(root: unknown, points: number[][], extra: Record<string, unknown> = {}): number[][] {
  const f = compileRecipe(parseRecipe(recipeText(root, extra)));
  const out = new Float32Array(points.length * 3);
  f.color(Float32Array.from(points.flat()), out);
  return points.map((_, i) => [out[3 * i], out[3 * i + 1], out[3 * i + 2]]);
}

/** mulberry32: a small seeded PRNG, uniform in [0, 1) (shared with the other tests). */
export { rng as seededRandom } from '../../../helpers/expect-mesh.js';
