/**
 * Tests for solveQef (core/meshing/solve-qef.ts). Expected answers are hand geometry: planes through
 * a known point meet there; the truncated pseudo-inverse keeps the mass point's coordinate along
 * directions the planes do not constrain (Lindstrom 2000, §3; Ju et al. 2002, §2.3).
 */
import { describe, expect, it } from 'vitest';
import { solveQef } from '../../../core/meshing/solve-qef.js';
import { seededRandom } from '../fields/recipe/recipe-test-utils.js';

const unit = (v: number[]) => {
  const l = Math.hypot(...v);
  return v.map((x) => x / l);
};

describe('solveQef', () => {
  it('three faces of a box corner meet at the corner (rank 3)', () => {
    // Planes x = 0.3, y = 0.4, z = 0.5, each given by an arbitrary point on it.
    const s = solveQef([0.3, 0.9, 0.1, 0.7, 0.4, 0.2, 0.1, 0.8, 0.5], [1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(s.rank).toBe(3);
    s.point.forEach((x, d) => expect(x).toBeCloseTo([0.3, 0.4, 0.5][d], 12));
    expect(s.error).toBeLessThan(1e-15);
  });

  it('random planes through one point recover that point', () => {
    const rnd = seededRandom(7);
    const target = [0.21, 0.67, 0.43];
    for (let trial = 0; trial < 20; trial++) {
      const pts: number[] = [];
      const nrm: number[] = [];
      for (let q = 0; q < 6; q++) {
        const n = unit([rnd() - 0.5, rnd() - 0.5, rnd() - 0.5]);
        // a point on the plane through `target`: target + a tangent offset
        const t = unit([n[1], -n[0], 0].some((x) => x !== 0) ? [n[1], -n[0], 0] : [0, n[2], -n[1]]);
        const k = rnd();
        pts.push(...target.map((x, d) => x + k * t[d]));
        nrm.push(...n);
      }
      const s = solveQef(pts, nrm);
      if (s.rank === 3) s.point.forEach((x, d) => expect(x).toBeCloseTo(target[d], 9));
    }
  });

  it('two faces (a crease) give the point on the crease nearest the mass point (rank 2)', () => {
    // Planes x = 0.5 and y = 0.25; the crease is the line (0.5, 0.25, z). Mass point z is kept.
    const s = solveQef([0.5, 0.1, 0.2, 0.5, 0.9, 0.4, 0.1, 0.25, 0.6, 0.8, 0.25, 0.8], [1, 0, 0, 1, 0, 0, 0, 1, 0, 0, 1, 0]);
    expect(s.rank).toBe(2);
    expect(s.point[0]).toBeCloseTo(0.5, 12);
    expect(s.point[1]).toBeCloseTo(0.25, 12);
    expect(s.point[2]).toBeCloseTo((0.2 + 0.4 + 0.6 + 0.8) / 4, 12);
  });

  it('planes less than the cutoff apart count as one plane (rank 1, mass point projected)', () => {
    // Normals 2° apart: singular value ratio about sin(2°)/√2 ≈ 0.025 < 0.1, so truncated.
    // Without truncation the two planes would meet far away (their line is ill-conditioned).
    const a = (2 * Math.PI) / 180;
    const n2 = [Math.sin(a), 0, Math.cos(a)];
    const s = solveQef([0, 0, 0.5, 1, 1, 0.5 - Math.tan(a)], [0, 0, 1, ...n2]);
    expect(s.rank).toBe(1);
    // The mass point (0.5, 0.5, ≈0.483) moves only along the mean normal (1° off z): x shifts by < 0.001.
    expect(s.point[0]).toBeCloseTo(0.5, 3);
    expect(s.point[1]).toBeCloseTo(0.5, 12);
    expect(Math.abs(s.point[2] - 0.5)).toBeLessThan(0.02);
    // A cutoff below the ratio keeps both directions.
    expect(solveQef([0, 0, 0.5, 1, 1, 0.5 - Math.tan(a)], [0, 0, 1, ...n2], { singularCutoff: 0.01 }).rank).toBe(2);
  });

  it('maxRank limits the directions kept, strongest first', () => {
    const s = solveQef([0.3, 0, 0, 0.3, 1, 1, 0, 0.4, 0, 0, 0, 0.5], [1, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1], { maxRank: 1 });
    expect(s.rank).toBe(1);
    expect(s.point[0]).toBeCloseTo(0.3, 12); // x is the strongest direction (two planes)
    expect(s.eigenvalues[0]).toBeCloseTo(2, 12);
  });

  it('no planes gives rank 0; misuse throws with the function name', () => {
    expect(solveQef([], []).rank).toBe(0);
    expect(() => solveQef([0, 0, 0], [0, 0])).toThrow(/^solveQef: /);
    expect(() => solveQef([0, 0, 0], [0, 0, 1], { singularCutoff: 0 })).toThrow(/singularCutoff/);
    expect(() => solveQef([0, 0, 0], [0, 0, 1], { maxRank: 4 })).toThrow(/maxRank/);
  });
});
