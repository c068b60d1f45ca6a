import { it } from 'vitest';
import { solveQef } from '/work/main/core/meshing/solve-qef.js';
it('q', () => {
  console.log(JSON.stringify(solveQef([0.3, 0, 0, 0, 0.4, 0, 0, 0, 0.5], [1, 0, 0, 0, 1, 0, 0, 0, 1])));
  const s = Math.SQRT1_2;
  console.log(JSON.stringify(solveQef([0.3, 0, 0, 0.3,1,0, 0, 0.4, 0, 1,0.4,0.2], [s, s, 0, s,s,0, -s, s, 0, -s,s,0])));
  console.log(JSON.stringify(solveQef([0.5, 0, 0, 0.5,1,0, 0.5, 0.4, 1], [1, 0, 0, 1,0,0, 1, 0, 0])));
});
