/**
 * The cell polygons of every marching-cubes configuration as a flat table, filled on first use, for the
 * hot loops of both marching-cubes drivers (marching-cubes.ts over the sampler's cells,
 * marching-cubes-grid.ts over dense grids): the loops of `cellLoops` with each loop's allowed fans
 * (mesh-builder.ts `fanStarts`) beside them, and the decider's inputs. Both drivers read the same plan,
 * so they make the same polygons and the same fans.
 */
import { cellLoops, EDGE_CORNERS, FACE_UV_CORNERS, insideJoined } from './cell-loops.js';
import { fanStarts } from './mesh-builder.js';

/** Lower and upper corner of each cell edge (cell-loops.ts numbering). */
export const EDGE_C0 = Int8Array.from(EDGE_CORNERS, (c) => c[0]);
export const EDGE_C1 = Int8Array.from(EDGE_CORNERS, (c) => c[1]);
/** 1 when the edge's lower corner is on the cell's upper (k + 1) plane. */
export const EDGE_UPPER = Int8Array.from(EDGE_CORNERS, (c) => (c[0] >> 2) & 1);

/** For each inside-corner mask, the faces (bit f) whose four corners make the ambiguous pattern. */
export const AMBIGUOUS_FACES = Uint8Array.from({ length: 256 }, (_, mask) => {
  let bits = 0;
  for (let f = 0; f < 6; f++) {
    const [c00, c10, c01, c11] = FACE_UV_CORNERS[f].map((c) => ((mask >> c) & 1) === 1);
    if (c00 === c11 && c10 === c01 && c00 !== c10) bits |= 1 << f;
  }
  return bits;
});

/**
 * The plan key of a cell with inside-corner `mask` and signed corner values `v` (negative inside):
 * mask | faceBits << 8, where faceBits marks the ambiguous faces whose inside corners the asymptotic
 * decider (cell-loops.ts `insideJoined`) joins.
 */
export function cellPlanKey(mask: number, v: ArrayLike<number>): number {
  let faceBits = 0;
  const amb = AMBIGUOUS_FACES[mask];
  if (amb !== 0) {
    for (let f = 0; f < 6; f++) {
      if (((amb >> f) & 1) === 0) continue;
      const fc = FACE_UV_CORNERS[f];
      if (insideJoined(v[fc[0]], v[fc[1]], v[fc[2]], v[fc[3]])) faceBits |= 1 << f;
    }
  }
  return mask | (faceBits << 8);
}

/**
 * The cell loops of each configuration, flattened on first use at key · PLAN_STRIDE: [loop count (0: not
 * made yet), then per loop: n, fanStarts, n edge ids]. A cell has at most 4 loops over at most 12 edges, so
 * 1 + 2·4 + 12 = 21 entries; allocated once so the array never moves.
 */
export const PLAN_STRIDE = 21;
export const PLAN = new Int16Array((1 << 14) * PLAN_STRIDE);

/** Where configuration `key`'s plan starts in {@link PLAN}, filling it on first use. */
export function cellPlanAt(key: number): number {
  const at = key * PLAN_STRIDE;
  if (PLAN[at] === 0) fillPlan(key);
  return at;
}

function fillPlan(key: number): void {
  const loops = cellLoops(key & 255, key >> 8);
  let at = key * PLAN_STRIDE;
  PLAN[at++] = loops.length;
  for (const l of loops) {
    PLAN[at++] = l.length;
    PLAN[at++] = fanStarts(l, l.length);
    for (const e of l) PLAN[at++] = e;
  }
}
