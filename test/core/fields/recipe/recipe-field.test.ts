import { describe, expect, it } from 'vitest';
import { CancelledError, FieldkilnError } from '../../../../core/types.js';
import { createRecipeField } from '../../../../core/fields/recipe/recipe-field.js';
import { recipeText } from './recipe-test-utils.js';

const TEXT = recipeText(
  { type: 'union', children: [{ type: 'sphere', radius: 0.5, color: [1, 0.5, 0] }, { type: 'box', size: [0.2, 0.2, 0.2], translate: [1, 0, 0] }] },
  { name: 'ball and block' },
);

describe('createRecipeField', () => {
  it('declares an sdf with level 0, Lipschitz 1 and color', () => {
    const f = createRecipeField(TEXT, 'ball.recipe.json');
    expect(f.kind).toBe('sdf');
    expect(f.defaultLevel).toBe(0);
    expect(f.hasColor).toBe(true);
    expect(f.lipschitz).toBe(1);
    expect(f.description).toEqual({
      source: 'recipe',
      name: 'ball.recipe.json',
      outputs: ['sdf', 'color'],
      details: { recipeName: 'ball and block', nodes: 3, boundsSource: 'auto' },
    });
    // shape box x -0.5..1.1, y and z +-0.5: longest edge 1.6 -> margin 0.16
    [-0.66, -0.66, -0.66, 1.26, 0.66, 0.66].forEach((v, i) => expect(f.bounds[i]).toBeCloseTo(v, 12));
  });

  it('evaluates distances and colors through promises', async () => {
    const f = createRecipeField(TEXT, 'ball.recipe.json');
    const pts = new Float32Array([0, 0, 0, 1, 0.3, 0]);
    const d = await f.evaluate(pts);
    expect(d).toBeInstanceOf(Float32Array);
    expect(d.length).toBe(2);
    expect(d[0]).toBeCloseTo(-0.5, 6); // sphere centre
    expect(d[1]).toBeCloseTo(0.2, 6); // 0.2 above the block's top face at y = 0.1
    const c = await f.evaluateColor!(pts);
    expect([...c].map((v) => Number(v.toFixed(6)))).toEqual([1, 0.5, 0, 0.8, 0.8, 0.8]);
  });

  it('rejects when the signal is already aborted, and on misuse', async () => {
    const f = createRecipeField(TEXT, 'ball.recipe.json');
    const ac = new AbortController();
    ac.abort();
    await expect(f.evaluate(new Float32Array(3), ac.signal)).rejects.toBeInstanceOf(CancelledError);
    await expect(f.evaluateColor!(new Float32Array(3), ac.signal)).rejects.toBeInstanceOf(CancelledError);
    await expect(f.evaluate(new Float32Array(4))).rejects.toThrow(/not a multiple of 3/);
  });

  it('throws the recipe error for a bad recipe', () => {
    expect(() => createRecipeField('{"format":"fieldkiln-recipe","version":1,"root":{"type":"cube"}}', 'x')).toThrow(FieldkilnError);
    expect(() => createRecipeField('{"format":"fieldkiln-recipe","version":1,"root":{"type":"cube"}}', 'x')).toThrow(/^recipe: \$\.root\.type "cube" is not a known node type/);
  });
});
