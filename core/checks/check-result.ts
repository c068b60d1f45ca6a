/**
 * The shape every named check in this folder returns, so the pipeline, the report and
 * `fieldkiln check` can list them alike. Types only.
 */

/** The outcome of one named check on one mesh. */
export interface CheckResult {
  /** Short kebab-case name, stable (report and `check --json` key): e.g. `edge-manifold`. */
  name: string;
  /** One sentence: what the word means, as Fieldkiln uses it. */
  definition: string;
  /** True when the mesh has the property. */
  ok: boolean;
  /** How many places fail (edges, vertices, triangles or components, as `unit` says); 0 when `ok`. */
  count: number;
  /** What `count` counts: `edges`, `vertices`, `triangles`, `components` or `values`. */
  unit: 'edges' | 'vertices' | 'triangles' | 'components' | 'values';
  /** Where it fails: up to {@link CHECK_EXAMPLES} points, metres, each `[x, y, z]` (rounded to µm). */
  where: number[][];
}

/** How many failing places a check lists in `where`. */
export const CHECK_EXAMPLES = 5;

/** Rounds a coordinate to 1 µm for display. */
export function roundMicron(x: number): number {
  return Math.round(x * 1e6) / 1e6;
}

/** The midpoint of edge (a, b), rounded for `where`. */
export function edgeMidpoint(positions: Float32Array, a: number, b: number): number[] {
  return [0, 1, 2].map((k) => roundMicron((positions[3 * a + k] + positions[3 * b + k]) / 2));
}

/** Vertex `v`'s position, rounded for `where`. */
export function vertexPoint(positions: Float32Array, v: number): number[] {
  return [0, 1, 2].map((k) => roundMicron(positions[3 * v + k]));
}

/** Triangle `t`'s centroid, rounded for `where`. */
export function triangleCentroid(positions: Float32Array, indices: Uint32Array, t: number): number[] {
  const a = indices[3 * t], b = indices[3 * t + 1], c = indices[3 * t + 2];
  return [0, 1, 2].map((k) => roundMicron((positions[3 * a + k] + positions[3 * b + k] + positions[3 * c + k]) / 3));
}
