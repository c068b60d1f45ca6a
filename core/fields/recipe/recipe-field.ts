/**
 * The recipe field source: a procedural SDF described by a JSON recipe, evaluated on the CPU.
 * Parsing and validation are in `parse-recipe.ts`, evaluation in `compile-recipe.ts`.
 */
import { throwIfAborted } from '../../types.js';
import type { Field, FieldDescription } from '../field.js';
import { compileRecipe } from './compile-recipe.js';
import { parseRecipe } from './parse-recipe.js';
import { isRecipeOperator, type RecipeNode } from './recipe-schema.js';

/** Number of nodes in a subtree. */
function countNodes(node: RecipeNode): number {
  return isRecipeOperator(node) ? 1 + node.children.reduce((n, c) => n + countNodes(c), 0) : 1;
}

/**
 * Parses, validates and compiles a recipe into a {@link Field}.
 * @param text the recipe file's contents.
 * @param name a label for reports, usually the file name.
 * @returns an `sdf` field in metres (level 0, Lipschitz 1) with color. `evaluate` resolves to one float per
 *   point, `evaluateColor` to 3 floats per point (linear RGB); both take 3 floats per point.
 * @throws FieldkilnError `recipe: ...` when the recipe is invalid (see `parseRecipe`).
 * @example
 * const field = createRecipeField(text, 'lantern-post.recipe.json');
 * const d = await field.evaluate(new Float32Array([0, 1, 0]));
 */
export function createRecipeField(text: string, name: string): Field {
  const recipe = parseRecipe(text);
  const compiled = compileRecipe(recipe);
  const description: FieldDescription = {
    source: 'recipe',
    name,
    outputs: ['sdf', 'color'],
    details: { recipeName: recipe.name, nodes: countNodes(recipe.root), boundsSource: recipe.boundsSource },
  };
  return {
    kind: 'sdf',
    bounds: compiled.bounds,
    defaultLevel: 0,
    hasColor: true,
    lipschitz: 1,
    description,
    async evaluate(points: Float32Array, signal?: AbortSignal): Promise<Float32Array> {
      throwIfAborted(signal);
      const out = new Float32Array(Math.floor(points.length / 3));
      compiled.distance(points, out);
      return out;
    },
    async evaluateColor(points: Float32Array, signal?: AbortSignal): Promise<Float32Array> {
      throwIfAborted(signal);
      const out = new Float32Array(3 * Math.floor(points.length / 3));
      compiled.color(points, out);
      return out;
    },
  };
}
