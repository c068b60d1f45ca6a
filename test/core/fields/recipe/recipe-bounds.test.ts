import { describe, expect, it } from 'vitest';
import { compileRecipe } from '../../../../core/fields/recipe/compile-recipe.js';
import { parseRecipe } from '../../../../core/fields/recipe/parse-recipe.js';
import { autoRecipeBounds, isBoxBounded, isBoxEmpty, recipeBounds, type ShapeBox } from '../../../../core/fields/recipe/recipe-bounds.js';
import { recipeText, seededRandom } from './recipe-test-utils.js';

/** The box of the recipe around `root`, from the normalized tree. */
function boxOf(root: unknown, extra: Record<string, unknown> = {}): ShapeBox {
  return recipeBounds(parseRecipe(recipeText(root, extra)).root);
}

function expectBox(actual: number[], expected: number[]): void {
  expected.forEach((v, i) => expect(actual[i], `side ${i}`).toBeCloseTo(v, 12));
}

describe('recipeBounds', () => {
  it('is exact for rotated round primitives (a disc of radius r, unit normal u, reaches r sqrt(1 - u_i^2))', () => {
    // torus turned 90 degrees about X: ring in the XY plane; R + r = 0.7 across x and y, r = 0.1 along z.
    expectBox(boxOf({ type: 'torus', majorRadius: 0.6, minorRadius: 0.1, rotate: { axis: [1, 0, 0], degrees: 90 } }), [-0.7, -0.7, -0.1, 0.7, 0.7, 0.1]);
    // cylinder laid along X, then moved: x spans the half height 0.5, y and z the radius 0.2.
    expectBox(boxOf({ type: 'cylinder', radius: 0.2, height: 1, rotate: { axis: [0, 0, 1], degrees: 90 }, translate: [1, 0, 0] }), [0.5, -0.2, -0.2, 1.5, 0.2, 0.2]);
    // sphere scaled by 2 and moved: radius 0.6 around (0, 1, 0).
    expectBox(boxOf({ type: 'sphere', radius: 0.3, scale: 2, translate: [0, 1, 0] }), [-0.6, 0.4, -0.6, 0.6, 1.6, 0.6]);
    // capsule: the two ends plus the radius.
    expectBox(boxOf({ type: 'capsule', a: [0, 0, 0], b: [1, 2, 0], radius: 0.1 }), [-0.1, -0.1, -0.1, 1.1, 2.1, 0.1]);
    // unit cube turned 45 degrees about Y: its vertical edges reach sqrt(2)/2 along x and z.
    const h = Math.SQRT1_2;
    expectBox(boxOf({ type: 'box', size: [1, 1, 1], rotate: { axis: [0, 1, 0], degrees: 45 } }), [-h, -0.5, -h, h, 0.5, h]);
  });

  it('grows a smooth union by (n - 1) * blend / 4 and keeps only the first child of a difference', () => {
    const su = { type: 'smoothUnion', blend: 0.08, children: [{ type: 'sphere', radius: 0.5 }, { type: 'sphere', radius: 0.5, translate: [1, 0, 0] }] };
    expectBox(boxOf(su), [-0.52, -0.52, -0.52, 1.52, 0.52, 0.52]);
    const diff = { type: 'difference', children: [{ type: 'box', size: [1, 1, 1] }, { type: 'sphere', radius: 2 }] };
    expectBox(boxOf(diff), [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]);
  });

  it('lets an intersection bound a plane', () => {
    const half = { type: 'intersection', children: [{ type: 'plane', normal: [0, 1, 0], offset: 0 }, { type: 'sphere', radius: 1 }] };
    const b = boxOf(half);
    expect(isBoxBounded(b)).toBe(true);
    expect(isBoxEmpty(b)).toBe(false);
    expect(isBoxBounded(boxOf({ type: 'plane', normal: [0, 1, 0], offset: 0 }, { bounds: [0, 0, 0, 1, 1, 1] }))).toBe(false);
  });

  it('contains every point with a negative value, on a recipe of every operator (seeded random points)', () => {
    const root = {
      type: 'union',
      rotate: { axis: [1, 2, 3], degrees: 40 },
      scale: 0.8,
      children: [
        {
          type: 'smoothUnion',
          blend: 0.1,
          children: [
            { type: 'sphere', radius: 0.2 },
            { type: 'sphere', radius: 0.2, translate: [0.35, 0, 0] },
            { type: 'sphere', radius: 0.2, translate: [0.17, 0.3, 0] },
          ],
        },
        {
          type: 'intersection',
          translate: [0, -0.4, 0],
          children: [
            { type: 'plane', normal: [1, 1, 0], offset: 0 },
            { type: 'torus', majorRadius: 0.3, minorRadius: 0.1, rotate: { axis: [1, 0, 0], degrees: 30 } },
          ],
        },
        { type: 'difference', translate: [-0.5, 0, 0], children: [{ type: 'cylinder', radius: 0.2, height: 0.3 }, { type: 'box', size: [0.2, 1, 0.2] }] },
      ],
    };
    const recipe = parseRecipe(recipeText(root));
    const box = recipeBounds(recipe.root);
    const f = compileRecipe(recipe);
    const rand = seededRandom(31);
    const n = 200_000;
    const pts = new Float32Array(3 * n);
    for (let i = 0; i < n; i++) {
      for (let a = 0; a < 3; a++) pts[3 * i + a] = box[a] - 0.05 + rand() * (box[a + 3] - box[a] + 0.1);
    }
    const d = new Float32Array(n);
    f.distance(pts, d);
    let inside = 0;
    for (let i = 0; i < n; i++) {
      if (d[i] >= 0) continue;
      inside++;
      for (let a = 0; a < 3; a++) {
        expect(pts[3 * i + a]).toBeGreaterThanOrEqual(box[a] - 1e-6);
        expect(pts[3 * i + a]).toBeLessThanOrEqual(box[a + 3] + 1e-6);
      }
    }
    expect(inside).toBeGreaterThan(1000);
    // The automatic bounds keep the whole surface inside: their faces are all outside the solid.
    const auto = recipe.bounds;
    for (let i = 0; i < 2000; i++) {
      const axis = i % 3;
      const p = [0, 1, 2].map((a) => auto[a] + rand() * (auto[a + 3] - auto[a]));
      p[axis] = auto[axis + (i % 2 ? 3 : 0)];
      const v = new Float32Array(1);
      f.distance(Float32Array.from(p), v);
      expect(v[0]).toBeGreaterThan(0);
    }
  });

  it('autoRecipeBounds adds max(10 % of the longest edge, 0.02 m)', () => {
    expectBox(autoRecipeBounds([0, 0, 0, 2, 1, 0.5]), [-0.2, -0.2, -0.2, 2.2, 1.2, 0.7]);
    expectBox(autoRecipeBounds([0, 0, 0, 0.1, 0.1, 0.1]), [-0.02, -0.02, -0.02, 0.12, 0.12, 0.12]);
    expect(() => autoRecipeBounds([-Infinity, 0, 0, 1, 1, 1])).toThrow(/^autoRecipeBounds:/);
  });
});
