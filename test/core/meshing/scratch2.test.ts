import { it } from 'vitest';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { dualContour } from '../../../core/meshing/dual-contouring.js';
import { findHermiteData } from '../../../core/meshing/hermite-data.js';
import { solveQef } from '../../../core/meshing/solve-qef.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { boxSdf } from '../../helpers/analytic-fields.js';
import { rotationMatrix, applyT, vertex, type V3 } from './meshing-test-utils.js';

const HALF: V3 = [0.3, 0.2, 0.1];
const R = rotationMatrix([1, 2, 3], 30);
it('scratch herm', async () => {
  const text = JSON.stringify({ format: 'fieldkiln-recipe', version: 1, bounds: [-0.5,-0.5,-0.5,0.5,0.5,0.5], root: { type: 'box', size: [0.6, 0.4, 0.2], rotate: { axis: [1, 2, 3], degrees: 30 } } });
  const f = createRecipeField(text, 'box');
  const cells = await sampleOctree(f, { depth: 6 });
  const h = cells.lattice.cellSize;
  const r = await dualContour(cells, f);
  const H = await findHermiteData(cells, f);
  const sdf = boxSdf(HALF);
  const V = r.mesh.positions.length / 3;
  const list: [number, number, string][] = [];
  for (let v = 0; v < V; v++) { const l = applyT(R, vertex(r.mesh, v)); list.push([Math.abs(sdf(...l)) / h, v, l.map(x => x.toFixed(4)).join(',')]); }
  list.sort((a, b) => b[0] - a[0]);
  console.log(list.slice(0, 6).map(x => x.join(' ')).join('\n'));
  for (const [, v] of list.slice(0, 2)) {
    const p = vertex(r.mesh, v);
    const ci = [0,1,2].map(d => Math.floor((p[d] - cells.lattice.origin[d]) / h));
    console.log('vertex', v, 'cell', ci, 'local', p.map((x, d) => ((x - cells.lattice.origin[d]) / h - ci[d]).toFixed(4)));
    const lp: number[] = [], ln: number[] = [];
    for (let x = 0; x < H.count; x++) {
      const q = [H.points[3*x], H.points[3*x+1], H.points[3*x+2]] as V3;
      const loc = [0,1,2].map(d => (q[d] - cells.lattice.origin[d]) / h - ci[d]);
      if (loc.every(c => c >= -1e-9 && c <= 1 + 1e-9)) {
        const n = [H.normals[3*x], H.normals[3*x+1], H.normals[3*x+2]] as V3;
        const nl = applyT(R, n);
        console.log(' crossing', loc.map(c => c.toFixed(4)).join(','), 'sdf/h', (sdf(...applyT(R, q))/h).toExponential(2), 'local normal', nl.map(c => c.toFixed(4)).join(','), 'box-local', applyT(R,q).map(c=>c.toFixed(4)).join(','));
        lp.push(...loc); ln.push(...n);
      }
    }
    console.log(JSON.stringify(solveQef(lp, ln)));
  }
});
