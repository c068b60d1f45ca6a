import { describe, expect, it } from 'vitest';
import { composeAffine, identityAffine, inverseNodeTransform, nodeTransform } from '../../../../core/fields/recipe/node-transform.js';
import type { Vec3 } from '../../../../core/fields/recipe/recipe-schema.js';
import { seededRandom } from './recipe-test-utils.js';

const apply = (m: Float64Array, p: number[]) => [0, 1, 2].map((r) => m[3 * r] * p[0] + m[3 * r + 1] * p[1] + m[3 * r + 2] * p[2] + m[9 + r]);

describe('nodeTransform', () => {
  it('scales, then rotates (right-handed), then translates', () => {
    // 90 degrees about +Z takes +X to +Y (right-hand rule); scale 2 first, then lift by 1 along Y.
    const m = nodeTransform({ translate: [0, 1, 0], rotate: { axis: [0, 0, 1], degrees: 90 }, scale: 2 });
    expect(apply(m, [1, 0, 0])).toEqual([0, 3, 0]);
    // 90 degrees about +X takes +Y to +Z; about +Y takes +Z to +X
    expect(apply(nodeTransform({ translate: [0, 0, 0], rotate: { axis: [1, 0, 0], degrees: 90 }, scale: 1 }), [0, 1, 0])).toEqual([0, 0, 1]);
    expect(apply(nodeTransform({ translate: [0, 0, 0], rotate: { axis: [0, 1, 0], degrees: 90 }, scale: 1 }), [0, 0, 1])).toEqual([1, 0, 0]);
  });

  it('inverseNodeTransform undoes nodeTransform, and composition matches applying in turn (seeded random)', () => {
    const rand = seededRandom(3);
    for (let t = 0; t < 50; t++) {
      const raw: Vec3 = [rand() - 0.5, rand() - 0.5, rand() - 0.5];
      const len = Math.hypot(...raw);
      const node = { translate: [rand(), rand(), rand()] as Vec3, rotate: { axis: raw.map((v) => v / len) as Vec3, degrees: rand() * 720 - 360 }, scale: 0.1 + rand() * 3 };
      const p = [rand(), rand(), rand()];
      const back = apply(inverseNodeTransform(node), apply(nodeTransform(node), p));
      back.forEach((v, i) => expect(v).toBeCloseTo(p[i], 12));
      const both = composeAffine(inverseNodeTransform(node), nodeTransform(node));
      both.forEach((v, i) => expect(v).toBeCloseTo(identityAffine()[i], 12));
      // rotations keep lengths: |M x| = scale |x|
      const m = nodeTransform({ ...node, translate: [0, 0, 0] });
      expect(Math.hypot(...apply(m, p))).toBeCloseTo(node.scale * Math.hypot(...p), 12);
    }
  });
});
