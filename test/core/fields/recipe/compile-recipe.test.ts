import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { compileRecipe } from '../../../../core/fields/recipe/compile-recipe.js';
import { parseRecipe } from '../../../../core/fields/recipe/parse-recipe.js';
import { colorsAt, distancesAt, recipeText, seededRandom } from './recipe-test-utils.js';

const repoRoot = fileURLToPath(new URL('../../../../', import.meta.url));
const fixtures = path.resolve(repoRoot, '../shared/fixtures');

// float32 output: values near 1 m carry about 6e-8 m of rounding.
const TOL = 1e-6;

describe('primitive distances (exact SDF formulas, Quilez "distance functions", checked by hand geometry)', () => {
  it('sphere: len(p) - r', () => {
    const d = distancesAt({ type: 'sphere', radius: 0.5 }, [
      [0, 0, 0],
      [1, 0, 0],
      [0.3, 0.4, 0],
      [0, -0.2, 0],
    ]);
    // centre -r; 1 m out is 0.5 outside; (0.3, 0.4, 0) has length 0.5 (3-4-5 triangle) so lies on the surface.
    expect(d[0]).toBeCloseTo(-0.5, 6);
    expect(d[1]).toBeCloseTo(0.5, 6);
    expect(d[2]).toBeCloseTo(0, 6);
    expect(d[3]).toBeCloseTo(-0.3, 6);
  });

  it('sphere agrees with the analytic_sdf of the shared fixtures probes (sphere_sdf, torus_sdf)', () => {
    // Source: /work/shared/fixtures/manifest.json, probes[].analytic_sdf, computed by the fixture generator (NumPy).
    const manifest = JSON.parse(readFileSync(path.join(fixtures, 'manifest.json'), 'utf8')) as {
      fixtures: { id: string; probes: { point: number[]; analytic_sdf: number }[] }[];
    };
    const roots: Record<string, unknown> = {
      sphere_sdf: { type: 'sphere', radius: 0.5 }, // manifest shape: sphere, centre 0, radius 0.5
      torus_sdf: { type: 'torus', majorRadius: 0.6, minorRadius: 0.2 }, // manifest shape: torus_y, R 0.6, r 0.2
    };
    for (const [id, root] of Object.entries(roots)) {
      const probes = manifest.fixtures.find((f) => f.id === id)!.probes;
      expect(probes.length).toBeGreaterThanOrEqual(8);
      const d = distancesAt(root, probes.map((p) => p.point));
      probes.forEach((p, i) => expect(Math.abs(d[i] - p.analytic_sdf)).toBeLessThan(TOL));
    }
  });

  it('box: faces, edges, corners and inside', () => {
    // size [2, 1, 0.5] -> half extents (1, 0.5, 0.25).
    const d = distancesAt({ type: 'box', size: [2, 1, 0.5] }, [
      [1.5, 0, 0], // 0.5 past the x face
      [2, 1.5, 0], // 1 past x and 1 past y: nearest is the edge (1, 0.5, z) -> sqrt(2)
      [2, 1.5, 1.25], // 1 past each face: nearest is the corner -> sqrt(3)
      [0, 0, 0], // centre: nearest face is z at 0.25
      [0.9, 0, 0], // 0.1 from the x face, 0.25 from z -> -0.1
      [1, 0.2, 0.1], // on the x face
    ]);
    expect(d[0]).toBeCloseTo(0.5, 6);
    expect(d[1]).toBeCloseTo(Math.SQRT2, 6);
    expect(d[2]).toBeCloseTo(Math.sqrt(3), 6);
    expect(d[3]).toBeCloseTo(-0.25, 6);
    expect(d[4]).toBeCloseTo(-0.1, 6);
    expect(d[5]).toBeCloseTo(0, 6);
  });

  it('roundedBox: flat faces as the box, corners as spheres of the rounding radius', () => {
    // size 2, radius 0.2: the corner is a sphere of radius 0.2 centred at (0.8, 0.8, 0.8).
    const d = distancesAt({ type: 'roundedBox', size: [2, 2, 2], radius: 0.2 }, [
      [1.5, 0, 0],
      [2, 2, 2],
      [0, 0, 0],
    ]);
    expect(d[0]).toBeCloseTo(0.5, 6);
    expect(d[1]).toBeCloseTo(1.2 * Math.sqrt(3) - 0.2, 6);
    expect(d[2]).toBeCloseTo(-1, 6);
  });

  it('capsule: distance to the segment minus the radius', () => {
    const root = { type: 'capsule', a: [0, 0, 0], b: [0, 1, 0], radius: 0.1 };
    const d = distancesAt(root, [
      [0.5, 0.5, 0], // beside the segment: 0.5 - 0.1
      [0, 2, 0], // beyond b: 1 - 0.1
      [0.3, -0.4, 0], // beyond a: |(0.3, -0.4)| = 0.5, minus 0.1
      [0.05, 0.5, 0], // inside: 0.05 - 0.1
    ]);
    expect(d[0]).toBeCloseTo(0.4, 6);
    expect(d[1]).toBeCloseTo(0.9, 6);
    expect(d[2]).toBeCloseTo(0.4, 6);
    expect(d[3]).toBeCloseTo(-0.05, 6);
    // a = b degenerates to a sphere (no 0/0).
    const s = distancesAt({ type: 'capsule', a: [0, 0, 0], b: [0, 0, 0], radius: 0.25 }, [[1, 0, 0]]);
    expect(s[0]).toBeCloseTo(0.75, 6);
  });

  it('cylinder: side, cap, rim edge and inside', () => {
    // radius 0.5, height 2 (caps at y = +-1)
    const d = distancesAt({ type: 'cylinder', radius: 0.5, height: 2 }, [
      [1, 0, 0], // 0.5 from the side
      [0, 1.5, 0.2], // 0.5 above the cap, within the radius
      [1, 2, 0], // beyond the rim circle (0.5, 1): sqrt(0.5^2 + 1^2)
      [0, 0.9, 0], // 0.1 below the cap
      [0, 0, 0.4], // 0.1 inside the side
    ]);
    expect(d[0]).toBeCloseTo(0.5, 6);
    expect(d[1]).toBeCloseTo(0.5, 6);
    expect(d[2]).toBeCloseTo(Math.hypot(0.5, 1), 6);
    expect(d[3]).toBeCloseTo(-0.1, 6);
    expect(d[4]).toBeCloseTo(-0.1, 6);
  });

  it('torus: ring in the XZ plane', () => {
    const d = distancesAt({ type: 'torus', majorRadius: 0.6, minorRadius: 0.2 }, [
      [0, 0, 0], // centre of the hole: 0.6 - 0.2
      [0.6, 0.5, 0], // above the tube centre line: 0.5 - 0.2
      [0, 0, -0.6], // on the centre line: -r
      [0, 0.6, 0], // on the axis, above: sqrt(0.6^2 + 0.6^2) - 0.2
    ]);
    expect(d[0]).toBeCloseTo(0.4, 6);
    expect(d[1]).toBeCloseTo(0.3, 6);
    expect(d[2]).toBeCloseTo(-0.2, 6);
    expect(d[3]).toBeCloseTo(0.6 * Math.SQRT2 - 0.2, 6);
  });

  it('plane: dot(n, p) - offset with the normal made unit length', () => {
    const d = distancesAt({ type: 'plane', normal: [0, 2, 0], offset: 0.5 }, [[3, 1.5, -2], [0, 0, 0]], { bounds: [-1, -1, -1, 1, 1, 1] });
    expect(d[0]).toBeCloseTo(1, 6);
    expect(d[1]).toBeCloseTo(-0.5, 6);
  });
});

describe('node transforms (scale, then rotate, then translate; d_world = s * d_local(p_local))', () => {
  it('uniform scale multiplies distances', () => {
    // sphere radius 0.5 scaled by 2 is a sphere of radius 1: at x = 3 the distance is 2.
    const d = distancesAt({ type: 'sphere', radius: 0.5, scale: 2 }, [[3, 0, 0], [0, 0, 0]]);
    expect(d[0]).toBeCloseTo(2, 6);
    expect(d[1]).toBeCloseTo(-1, 6);
  });

  it('rotation is right-handed: 90 degrees about +Z takes +X to +Y', () => {
    const root = { type: 'union', rotate: { axis: [0, 0, 1], degrees: 90 }, children: [{ type: 'sphere', radius: 0.25, translate: [1, 0, 0] }] };
    const d = distancesAt(root, [[0, 1, 0], [1, 0, 0]]);
    expect(d[0]).toBeCloseTo(-0.25, 6);
    expect(d[1]).toBeCloseTo(Math.SQRT2 - 0.25, 6);
  });

  it('applies scale first, then rotate, then translate', () => {
    // box 1 x 0.2 x 0.2 -> scaled to 2 x 0.4 x 0.4 -> turned upright -> lifted 1 m: it spans y 0..2, x and z +-0.2.
    const root = { type: 'box', size: [1, 0.2, 0.2], scale: 2, rotate: { axis: [0, 0, 1], degrees: 90 }, translate: [0, 1, 0] };
    const d = distancesAt(root, [[0, 2.5, 0], [0.7, 1, 0], [0, -0.5, 0]]);
    expect(d[0]).toBeCloseTo(0.5, 6);
    expect(d[1]).toBeCloseTo(0.5, 6);
    expect(d[2]).toBeCloseTo(0.5, 6);
  });

  it('45 degrees about Y brings a cube edge to x = sqrt(2); a non-unit axis means the same', () => {
    const d = distancesAt({ type: 'box', size: [2, 2, 2], rotate: { axis: [0, 5, 0], degrees: 45 } }, [[3, 0, 0], [0, 0, 3]]);
    expect(d[0]).toBeCloseTo(3 - Math.SQRT2, 6);
    expect(d[1]).toBeCloseTo(3 - Math.SQRT2, 6);
  });

  it('120 degrees about (1,1,1) cycles the axes x -> y -> z (Rodrigues)', () => {
    const d = distancesAt({ type: 'box', size: [2, 0.5, 0.5], rotate: { axis: [1, 1, 1], degrees: 120 } }, [
      [0, 1.5, 0],
      [1.5, 0, 0],
    ]);
    // the long (x) axis now points along y
    expect(d[0]).toBeCloseTo(0.5, 5);
    expect(d[1]).toBeCloseTo(1.25, 5);
  });

  it('nested transforms compose: a parent scale moves and grows its children', () => {
    // parent scale 2; child sphere radius 0.1, scale 1.5, translate [1, 0, 0] -> radius 0.3 centred at x = 2.
    const root = { type: 'union', scale: 2, children: [{ type: 'sphere', radius: 0.1, scale: 1.5, translate: [1, 0, 0] }] };
    const d = distancesAt(root, [[2, 0, 0], [3, 0, 0], [2, 0.3, 0]]);
    expect(d[0]).toBeCloseTo(-0.3, 6);
    expect(d[1]).toBeCloseTo(0.7, 6);
    expect(d[2]).toBeCloseTo(0, 6);
  });

  it('a scaled smooth union scales its blend too (smin is positively homogeneous)', () => {
    const pair = (scale: number) => ({
      type: 'smoothUnion',
      blend: 0.2,
      scale,
      children: [
        { type: 'sphere', radius: 0.5, translate: [-0.6, 0, 0] },
        { type: 'sphere', radius: 0.5, translate: [0.6, 0, 0] },
      ],
    });
    const [small] = distancesAt(pair(1), [[0, 0.1, 0]]);
    const [big] = distancesAt(pair(3), [[0, 0.3, 0]]);
    expect(big).toBeCloseTo(3 * small, 5);
  });
});

describe('operators', () => {
  const two = [
    { type: 'sphere', radius: 0.5, translate: [-0.6, 0, 0], color: [1, 0, 0] },
    { type: 'sphere', radius: 0.5, translate: [0.6, 0, 0], color: [0, 0, 1] },
  ];

  it('smoothUnion follows smin(a,b,k) = b(1-h) + a h - k h (1-h) (formula from shared/fixtures/README.md)', () => {
    const d = distancesAt({ type: 'smoothUnion', blend: 0.2, children: two }, [
      [0, 0, 0], // a = b = 0.1, h = 1/2: 0.1 - 0.2/4 = 0.05
      [0.05, 0, 0], // a = 0.15, b = 0.05, h = 0.25: 0.05*0.75 + 0.15*0.25 - 0.2*0.25*0.75 = 0.0375
      [-0.6, 0, 0], // deep in the left sphere, |b - a| >= k: plain min = -0.5
    ]);
    expect(d[0]).toBeCloseTo(0.05, 6);
    expect(d[1]).toBeCloseTo(0.0375, 6);
    expect(d[2]).toBeCloseTo(-0.5, 6);
  });

  it('union, intersection and difference are min, max and max(a, -b)', () => {
    const box = { type: 'box', size: [2, 2, 2] };
    const ball = { type: 'sphere', radius: 0.5 };
    const pts = [
      [0, 0, 0],
      [0.8, 0, 0],
      [2, 0, 0],
    ];
    expect(distancesAt({ type: 'union', children: [box, ball] }, pts)).toEqual(
      distancesAt(box, pts), // the ball lies inside the box
    );
    const inter = distancesAt({ type: 'intersection', children: [box, ball] }, pts);
    expect(inter[0]).toBeCloseTo(-0.5, 6);
    expect(inter[1]).toBeCloseTo(0.3, 6);
    expect(inter[2]).toBeCloseTo(1.5, 6);
    const diff = distancesAt({ type: 'difference', children: [box, ball] }, pts);
    expect(diff[0]).toBeCloseTo(0.5, 6); // inside the hole
    expect(diff[1]).toBeCloseTo(-0.2, 6); // in the wall: 0.2 from the box face, 0.3 from the hole
    expect(diff[2]).toBeCloseTo(1, 6);
  });

  it('union colors come from the nearest child', () => {
    const c = colorsAt({ type: 'union', children: two }, [[-0.6, 0, 0], [0.7, 0.1, 0]]);
    expect(c[0]).toEqual([1, 0, 0]);
    expect(c[1]).toEqual([0, 0, 1]);
  });

  it('smoothUnion colors blend with the same h as the distances', () => {
    const c = colorsAt({ type: 'smoothUnion', blend: 0.2, children: two }, [[0, 0, 0], [0.05, 0, 0], [-0.6, 0, 0]]);
    expect(c[0][0]).toBeCloseTo(0.5, 6);
    expect(c[0][2]).toBeCloseTo(0.5, 6);
    // h = 0.25 is the weight of the first (red) child
    expect(c[1][0]).toBeCloseTo(0.25, 6);
    expect(c[1][2]).toBeCloseTo(0.75, 6);
    expect(c[2]).toEqual([1, 0, 0]);
  });

  it('intersection takes the color of the child with the largest value; difference colors its cut faces', () => {
    const box = { type: 'box', size: [2, 2, 2], color: [0, 1, 0] };
    const ball = { type: 'sphere', radius: 0.5, color: [1, 1, 0] };
    const inter = colorsAt({ type: 'intersection', children: [box, ball] }, [[0.8, 0, 0], [0, 0, 0.99]]);
    expect(inter[0]).toEqual([1, 1, 0]); // ball value 0.3 > box value -0.2
    expect(inter[1]).toEqual([1, 1, 0]); // ball 0.49 > box -0.01
    const inter2 = colorsAt({ type: 'intersection', children: [box, { ...ball, radius: 3 }] }, [[0.99, 0, 0]]);
    expect(inter2[0]).toEqual([0, 1, 0]); // box -0.01 > ball -2.01
    const diff = colorsAt({ type: 'difference', children: [box, ball] }, [[0.5, 0, 0], [0.99, 0, 0]]);
    expect(diff[0]).toEqual([1, 1, 0]); // on the hole's wall, the subtracted ball is the active term
    expect(diff[1]).toEqual([0, 1, 0]); // near the outer face, the box is
  });

  it('children inherit the nearest ancestor color; the default is 0.8 grey', () => {
    const root = {
      type: 'union',
      children: [
        { type: 'union', color: [0.1, 0.6, 0.2], children: [{ type: 'sphere', radius: 0.2 }] },
        { type: 'sphere', radius: 0.2, translate: [1, 0, 0] },
      ],
    };
    const c = colorsAt(root, [[0, 0, 0], [1, 0, 0]]);
    expect(c[0].map((v) => Number(v.toFixed(6)))).toEqual([0.1, 0.6, 0.2]);
    expect(c[1].map((v) => Number(v.toFixed(6)))).toEqual([0.8, 0.8, 0.8]);
  });
});

/** A recipe using every primitive and operator with rotations, scales and translations. */
const COMPLEX = {
  type: 'union',
  children: [
    {
      type: 'smoothUnion',
      blend: 0.08,
      rotate: { axis: [0.3, 1, 0.2], degrees: 33 },
      children: [
        { type: 'roundedBox', size: [0.6, 0.2, 0.5], radius: 0.05 },
        { type: 'cylinder', radius: 0.1, height: 0.8, translate: [0.1, 0.4, 0], rotate: { axis: [1, 0, 0], degrees: 20 } },
        { type: 'capsule', a: [-0.3, 0, 0], b: [0.2, 0.5, 0.1], radius: 0.08, scale: 1.3 },
      ],
    },
    {
      type: 'difference',
      translate: [0.6, 0.1, -0.2],
      scale: 0.7,
      children: [
        { type: 'box', size: [0.5, 0.5, 0.5], rotate: { axis: [1, 1, 0], degrees: 17 } },
        { type: 'sphere', radius: 0.3, translate: [0.1, 0.1, 0.1] },
        { type: 'torus', majorRadius: 0.3, minorRadius: 0.05, rotate: { axis: [0, 0, 1], degrees: 90 } },
      ],
    },
    {
      type: 'intersection',
      translate: [-0.6, 0, 0.3],
      children: [
        { type: 'sphere', radius: 0.3 },
        { type: 'plane', normal: [0.2, 1, -0.1], offset: 0.05 },
      ],
    },
  ],
};

describe('distance properties on a complex recipe (seeded random points)', () => {
  const f = compileRecipe(parseRecipe(recipeText(COMPLEX)));

  it('is 1-Lipschitz: |f(p) - f(q)| <= |p - q| for near and far pairs', () => {
    // Property of exact SDFs and of min/max/smin of them (Hart 1996; smin partials h and 1 - h).
    const rand = seededRandom(12345);
    const n = 40000;
    const p = new Float32Array(3 * n);
    const q = new Float32Array(3 * n);
    for (let i = 0; i < n; i++) {
      const step = i % 2 === 0 ? 1e-3 : 1; // half finite differences, half far pairs
      for (let a = 0; a < 3; a++) {
        p[3 * i + a] = (rand() * 2 - 1) * 1.2;
        q[3 * i + a] = p[3 * i + a] + (rand() * 2 - 1) * step;
      }
    }
    const fp = new Float32Array(n);
    const fq = new Float32Array(n);
    f.distance(p, fp);
    f.distance(q, fq);
    let worst = 0;
    for (let i = 0; i < n; i++) {
      const dist = Math.hypot(p[3 * i] - q[3 * i], p[3 * i + 1] - q[3 * i + 1], p[3 * i + 2] - q[3 * i + 2]);
      const ratio = (Math.abs(fp[i] - fq[i]) - 2e-7) / dist; // 2e-7: float32 rounding of two outputs near 1 m
      worst = Math.max(worst, ratio);
    }
    expect(worst).toBeLessThanOrEqual(1 + 1e-6);

    // And not trivially flat: min/max/difference of exact SDFs keep |grad f| = 1 wherever they are
    // differentiable, and only the smooth-union blend band (and kinks) drop below it. Central differences
    // along x, y, z at 2000 of the points:
    const m = 2000;
    const h = 1e-3;
    const probes = new Float32Array(3 * 6 * m);
    for (let i = 0; i < m; i++) {
      for (let k = 0; k < 6; k++) {
        for (let a = 0; a < 3; a++) probes[3 * (6 * i + k) + a] = p[3 * i + a] + (a === k >> 1 ? (k % 2 ? -h : h) : 0);
      }
    }
    const v = new Float32Array(6 * m);
    f.distance(probes, v);
    let unit = 0;
    for (let i = 0; i < m; i++) {
      const g = Math.hypot(v[6 * i] - v[6 * i + 1], v[6 * i + 2] - v[6 * i + 3], v[6 * i + 4] - v[6 * i + 5]) / (2 * h);
      if (g > 0.98) unit++;
    }
    expect(unit / m).toBeGreaterThan(0.9);
  });

  it('every primitive is exact under rotation, scale and translation: p - f(p) grad f(p) lands on the surface', () => {
    // For an exact SDF, the closest surface point is p - f(p) * grad f(p), and there |f| = 0.
    const rand = seededRandom(777);
    const prims = [
      { type: 'sphere', radius: 0.3 },
      { type: 'box', size: [0.5, 0.3, 0.2] },
      { type: 'roundedBox', size: [0.5, 0.3, 0.4], radius: 0.1 },
      { type: 'capsule', a: [0, -0.2, 0], b: [0.2, 0.2, 0.1], radius: 0.1 },
      { type: 'cylinder', radius: 0.2, height: 0.5 },
      { type: 'torus', majorRadius: 0.3, minorRadius: 0.08 },
    ];
    for (const prim of prims) {
      const node = {
        ...prim,
        scale: 0.5 + rand(),
        rotate: { axis: [rand() - 0.5, rand() - 0.5, rand() - 0.5], degrees: rand() * 360 },
        translate: [rand() - 0.5, rand() - 0.5, rand() - 0.5],
      };
      const g = compileRecipe(parseRecipe(recipeText(node)));
      const n = 400;
      const h = 1e-4;
      const pts = new Float32Array(3 * n * 7);
      for (let i = 0; i < n; i++) {
        const c = [(rand() * 2 - 1) * 1.5, (rand() * 2 - 1) * 1.5, (rand() * 2 - 1) * 1.5];
        for (let k = 0; k < 7; k++) {
          const o = [0, 0, 0];
          if (k > 0) o[(k - 1) >> 1] = k % 2 ? h : -h;
          for (let a = 0; a < 3; a++) pts[3 * (7 * i + k) + a] = c[a] + o[a];
        }
      }
      const v = new Float32Array(n * 7);
      g.distance(pts, v);
      const proj = new Float32Array(3 * n);
      for (let i = 0; i < n; i++) {
        const d = v[7 * i];
        const grad = [0, 1, 2].map((a) => (v[7 * i + 1 + 2 * a] - v[7 * i + 2 + 2 * a]) / (2 * h));
        for (let a = 0; a < 3; a++) proj[3 * i + a] = pts[3 * 7 * i + a] - d * grad[a];
      }
      const on = new Float32Array(n);
      g.distance(proj, on);
      // Finite-difference gradients in float32 carry ~1e-3 error, and a few points sit on a kink (the
      // medial axis) where the gradient is undefined: require 97 % within 2 mm.
      const good = [...on].filter((x) => Math.abs(x) < 2e-3).length;
      expect(good / n, prim.type).toBeGreaterThan(0.97);
    }
  });

  it('gives the same values in one batch as point by point (chunk boundaries do not matter)', () => {
    const rand = seededRandom(99);
    const n = 1000; // several chunks plus a partial one
    const pts = new Float32Array(3 * n).map(() => rand() * 2 - 1);
    const all = new Float32Array(n);
    f.distance(pts, all);
    const allColor = new Float32Array(3 * n);
    f.color(pts, allColor);
    const one = new Float32Array(1);
    const oneColor = new Float32Array(3);
    for (let i = 0; i < n; i += 37) {
      f.distance(pts.subarray(3 * i, 3 * i + 3), one);
      expect(one[0]).toBe(all[i]);
      f.color(pts.subarray(3 * i, 3 * i + 3), oneColor);
      expect([...oneColor]).toEqual([...allColor.subarray(3 * i, 3 * i + 3)]);
    }
  });

  it('colors stay in 0..1 and the evaluator checks its arrays', () => {
    const rand = seededRandom(5);
    const pts = new Float32Array(3 * 500).map(() => rand() * 2 - 1);
    const c = new Float32Array(3 * 500);
    f.color(pts, c);
    expect(c.every((x) => x >= 0 && x <= 1)).toBe(true);
    expect(() => f.distance(new Float32Array(4), new Float32Array(2))).toThrow(/^compileRecipe distance: points holds 4 floats/);
    expect(() => f.color(new Float32Array(6), new Float32Array(3))).toThrow(/^compileRecipe color: out holds 3 floats/);
    expect(f.bounds).toEqual(parseRecipe(recipeText(COMPLEX)).bounds);
  });
});
