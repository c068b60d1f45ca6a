import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { compileRecipe } from '../../../../core/fields/recipe/compile-recipe.js';
import { parseRecipe } from '../../../../core/fields/recipe/parse-recipe.js';
import { isBoxBounded, recipeBounds } from '../../../../core/fields/recipe/recipe-bounds.js';

const demo = path.resolve(fileURLToPath(new URL('../../../../', import.meta.url)), 'assets/demo');
const FILES = ['lantern-post.recipe.json', 'market-crate.recipe.json', 'glazed-pot-stand.recipe.json'];

function load(file: string) {
  const recipe = parseRecipe(readFileSync(path.join(demo, file), 'utf8'));
  const f = compileRecipe(recipe);
  const at = (p: number[]) => {
    const d = new Float32Array(1);
    const c = new Float32Array(3);
    f.distance(Float32Array.from(p), d);
    f.color(Float32Array.from(p), c);
    return { d: d[0], c: [...c].map((v) => Number(v.toFixed(4))) };
  };
  return { recipe, at };
}

describe('Kilnmarket demo recipes', () => {
  for (const file of FILES) {
    it(`${file} parses, names itself, and its explicit bounds hold the whole shape`, () => {
      const { recipe } = load(file);
      expect(recipe.name).toMatch(/^Kilnmarket /);
      expect(recipe.boundsSource).toBe('explicit');
      const box = recipeBounds(recipe.root);
      expect(isBoxBounded(box)).toBe(true);
      // at least 2 cm of empty margin on every side, so a mesher sees the surface closed
      for (let a = 0; a < 3; a++) {
        expect(box[a] - recipe.bounds[a]).toBeGreaterThanOrEqual(0.02);
        expect(recipe.bounds[a + 3] - box[a + 3]).toBeGreaterThanOrEqual(0.02);
      }
      // it stands on the ground (y = 0), in metres of a real prop: under 2 m
      expect(box[1]).toBeCloseTo(0, 1);
      expect(box[4]).toBeLessThan(2);
    });
  }

  it('lantern post: 1.5-2 m tall, stone base, iron pole, amber glass behind the windows', () => {
    const { recipe, at } = load('lantern-post.recipe.json');
    const top = recipeBounds(recipe.root)[4];
    expect(top).toBeGreaterThan(1.5);
    expect(top).toBeLessThan(2);
    expect(at([0.15, 0.06, 0.15]).c).toEqual([0.42, 0.4, 0.37]); // inside the base slab
    expect(at([0, 1, 0]).d).toBeLessThan(0); // inside the pole
    expect(at([0, 1, 0]).c).toEqual([0.09, 0.09, 0.1]);
    expect(at([0, 1.64, 0]).c).toEqual([1, 0.62, 0.22]); // the lamp glass
    expect(at([0.09, 1.64, 0]).d).toBeGreaterThan(0); // looking in through the X window
  });

  it('market crate: open top, hollow inside, jugs standing on the floor', () => {
    const { at } = load('market-crate.recipe.json');
    expect(at([0, 0.3, 0]).d).toBeGreaterThan(0); // the empty middle
    expect(at([0.285, 0.15, 0]).d).toBeLessThan(0); // the end wall
    expect(at([0.285, 0.28, 0]).d).toBeGreaterThan(0); // its hand hole
    expect(at([-0.12, 0.11, 0]).c).toEqual([0.6, 0.29, 0.17]); // terracotta jug body
    expect(at([0, 0.01, 0]).d).toBeLessThan(0); // the floor
  });

  it('glazed pot: hollow vessel with a torus rim and handle loops, on a ring stand', () => {
    const { at } = load('glazed-pot-stand.recipe.json');
    expect(at([0, 0.52, 0]).d).toBeGreaterThan(0); // inside the hollow
    expect(at([0.185, 0.52, 0]).d).toBeLessThan(0); // in the glazed wall
    expect(at([0.26, 0.57, 0]).c).toEqual([0.78, 0.55, 0.2]); // outer side of a handle loop
    expect(at([0.23, 0.57, 0]).d).toBeGreaterThan(0); // the handle's hole, outside the body
    expect(at([0, 0.82, 0]).d).toBeGreaterThan(0); // the open mouth, inside the rim
    expect(at([0.07, 0.82, 0]).c).toEqual([0.78, 0.55, 0.2]); // the rim torus
  });
});
