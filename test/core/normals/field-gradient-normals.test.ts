/** Field normals by batched central differences: on the sphere, every normal within 0.5° of the true radial direction at depth 7. */
import { describe, expect, test } from 'vitest';
import { fieldGradientNormals, FIELD_GRADIENT_NORMALS_DEFAULTS } from '../../../core/normals/field-gradient-normals.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import type { Field } from '../../../core/fields/field.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

const B = [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75] as [number, number, number, number, number, number];

/** Largest angle (degrees) between each normal and the radial direction from the origin. */
function worstRadialAngle(positions: Float32Array, normals: Float32Array): number {
  let worst = 0;
  for (let v = 0; v < positions.length; v += 3) {
    const r = Math.hypot(positions[v], positions[v + 1], positions[v + 2]);
    const dot = (positions[v] * normals[v] + positions[v + 1] * normals[v + 1] + positions[v + 2] * normals[v + 2]) / r;
    worst = Math.max(worst, (Math.acos(Math.min(1, dot)) * 180) / Math.PI);
  }
  return worst;
}

describe('fieldGradientNormals', () => {
  test('sphere r = 0.5 at depth 7: every normal within 0.5° of radial (the analytic normal of a sphere)', async () => {
    const field = fnField(sphereSdf(0.5), B);
    const cells = await sampleOctree(field, { depth: 7, level: 0 });
    const m = marchingCubes(cells);
    const calls0 = field.calls;
    const r = await fieldGradientNormals(field, m.positions, m.indices, { step: FIELD_GRADIENT_NORMALS_DEFAULTS.stepCells * cells.lattice.cellSize });
    const worst = worstRadialAngle(m.positions, r.normals);
    const meshWorst = worstRadialAngle(m.positions, areaWeightedNormals(m.positions, m.indices));
    console.log(`sphere depth 7, ${m.positions.length / 3} vertices: field normals within ${worst.toFixed(4)}°, area-weighted mesh normals within ${meshWorst.toFixed(3)}° of radial`);
    expect(worst).toBeLessThan(0.5);
    expect(r.fallbackVertices).toBe(0);
    // Batched: exactly 6 evaluations per vertex.
    expect(field.calls - calls0).toBe(6 * (m.positions.length / 3));
    for (let v = 0; v < r.normals.length; v += 3) expect(Math.hypot(r.normals[v], r.normals[v + 1], r.normals[v + 2])).toBeCloseTo(1, 5);
  });

  test('a density field (inside where high) gets outward normals too: −∇f', async () => {
    // Fixture convention (../shared/fixtures/README.md): density = 40·sigmoid(−sdf / 0.02), the surface at density 20.
    const sdf = sphereSdf(0.5);
    const field = fnField((x, y, z) => 40 / (1 + Math.exp(sdf(x, y, z) / 0.02)), B, { kind: 'density', level: 20 });
    const cells = await sampleOctree(field, { depth: 5, level: 20 });
    const m = marchingCubes(cells);
    const r = await fieldGradientNormals(field, m.positions, m.indices, { step: cells.lattice.cellSize / 2 });
    expect(worstRadialAngle(m.positions, r.normals)).toBeLessThan(2);
  });

  test('where the field gives NaN, vertices fall back to the mesh normal and are counted', async () => {
    const inner = fnField(sphereSdf(0.5), B);
    const field: Field = {
      ...inner,
      async evaluate(p: Float32Array) {
        const out = await inner.evaluate(p);
        for (let i = 0; i < out.length; i++) if (p[3 * i + 1] > 0.45) out[i] = NaN;
        return out;
      },
    };
    const m = marchingCubes(await sampleOctree(inner, { depth: 5, level: 0 }));
    const r = await fieldGradientNormals(field, m.positions, m.indices, { step: 0.01 });
    let top = 0;
    for (let v = 1; v < m.positions.length; v += 3) if (m.positions[v] + 0.01 > 0.45) top++;
    expect(r.fallbackVertices).toBe(top);
    expect(worstRadialAngle(m.positions, r.normals)).toBeLessThan(20);
  });

  test('misuse: a step that is not positive throws, naming the function', async () => {
    await expect(fieldGradientNormals(fnField(sphereSdf(0.5), B), new Float32Array(3), new Uint32Array(0), { step: 0 })).rejects.toThrow(/fieldGradientNormals: step/);
  });
});
