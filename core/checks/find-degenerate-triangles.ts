/**
 * Degenerate triangles: triangles with a repeated vertex index or zero area (computed in float64
 * from the stored float32 positions; `minArea` in m², default 0). Returns triangle indices.
 */
export function findDegenerateTriangles(positions: Float32Array, indices: Uint32Array, minArea = 0): number[] {
  const out: number[] = [];
  for (let t = 0; t < indices.length; t += 3) {
    const a = indices[t], b = indices[t + 1], c = indices[t + 2];
    if (a === b || b === c || a === c || triangleArea(positions, a, b, c) <= minArea) out.push(t / 3);
  }
  return out;
}

/** Area of triangle (a, b, c), m². */
export function triangleArea(p: Float32Array, a: number, b: number, c: number): number {
  const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
  const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
  const x = uy * vz - uz * vy, y = uz * vx - ux * vz, z = ux * vy - uy * vx;
  return 0.5 * Math.sqrt(x * x + y * y + z * z);
}
