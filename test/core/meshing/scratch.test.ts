import { it } from 'vitest';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { dualContour } from '../../../core/meshing/dual-contouring.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { boxSdf } from '../../helpers/analytic-fields.js';
import { rotationMatrix, apply, applyT, vertex, triangleNormal, angleDeg, type V3 } from './meshing-test-utils.js';
import type { MeshData } from '../../../core/types.js';

const HALF: V3 = [0.3, 0.2, 0.1];
const R = rotationMatrix([1, 2, 3], 30);
function figures(mesh: MeshData, h: number) {
  const V = mesh.positions.length / 3;
  const sdf = boxSdf(HALF);
  let maxSurf = 0;
  for (let v = 0; v < V; v++) maxSurf = Math.max(maxSurf, Math.abs(sdf(...applyT(R, vertex(mesh, v)))));
  let maxCorner = 0;
  for (let c = 0; c < 8; c++) {
    const corner = apply(R, [c & 1 ? HALF[0] : -HALF[0], c & 2 ? HALF[1] : -HALF[1], c & 4 ? HALF[2] : -HALF[2]]);
    let best = Infinity;
    for (let v = 0; v < V; v++) { const p = vertex(mesh, v); best = Math.min(best, Math.hypot(p[0]-corner[0], p[1]-corner[1], p[2]-corner[2])); }
    maxCorner = Math.max(maxCorner, best);
  }
  let maxAngle = 0, flat = 0;
  const T = mesh.indices.length / 3;
  for (let t = 0; t < T; t++) {
    const cen = [0,1,2].map(q => vertex(mesh, mesh.indices[3*t+q])).reduce((s, p) => [s[0]+p[0]/3, s[1]+p[1]/3, s[2]+p[2]/3], [0,0,0]) as V3;
    const l = applyT(R, cen);
    for (let a = 0; a < 3; a++) {
      if (Math.abs(Math.abs(l[a]) - HALF[a]) > 0.5 * h) continue;
      const b = (a+1)%3, c = (a+2)%3;
      if (Math.abs(l[b]) > HALF[b] - 0.5*h || Math.abs(l[c]) > HALF[c] - 0.5*h) continue;
      const n: V3 = [0,0,0]; n[a] = Math.sign(l[a]);
      maxAngle = Math.max(maxAngle, angleDeg(triangleNormal(mesh, t), apply(R, n)));
      flat++;
    }
  }
  return { corner: maxCorner / h, surface: maxSurf / h, angle: maxAngle, flat };
}

it('scratch box', async () => {
  const text = JSON.stringify({ format: 'fieldkiln-recipe', version: 1, bounds: [-0.5,-0.5,-0.5,0.5,0.5,0.5], root: { type: 'box', size: [0.6, 0.4, 0.2], rotate: { axis: [1, 2, 3], degrees: 30 } } });
  const f = createRecipeField(text, 'box');
  const cells = await sampleOctree(f, { depth: 6 });
  const h = cells.lattice.cellSize;
  for (const opts of [{}, {creaseReach: 0}, {creaseReach: 0.25}, {creaseReach: 1}, {gradientStep: 0.001}, {gradientStep: 0.05}]) {
    const r = await dualContour(cells, f, opts);
    console.log(JSON.stringify(opts), JSON.stringify(figures(r.mesh, h)), r.extraEvaluations, JSON.stringify(r.stats), analyzeMesh(r.mesh).watertight);
  }
  console.log('MC', JSON.stringify(figures(marchingCubes(cells), h)));
});
