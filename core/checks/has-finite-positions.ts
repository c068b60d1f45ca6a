/** Finite: every vertex coordinate is a finite number (no NaN or ±Inf), and every index names a vertex. */
import type { MeshData } from '../types.js';
import type { CheckResult } from './check-result.js';

/** Checks that `mesh` has only finite coordinates and in-range indices. `where` stays empty: a NaN has no place to show. */
export function hasFinitePositions(mesh: MeshData): CheckResult {
  const { positions, indices } = mesh;
  const V = positions.length / 3;
  let bad = 0;
  for (let i = 0; i < positions.length; i++) if (!Number.isFinite(positions[i])) bad++;
  for (let i = 0; i < indices.length; i++) if (indices[i] >= V) bad++;
  return {
    name: 'finite',
    definition: 'every coordinate is finite and every index names a vertex',
    ok: bad === 0,
    count: bad,
    unit: 'values',
    where: [],
  };
}
