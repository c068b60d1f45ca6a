/**
 * Vertex normals as the area-weighted sum of the incident triangles' normals (the cross product of
 * two edges has length twice the area, so summing unnormalized face normals weights by area),
 * normalized. Returns 3 floats per vertex; a vertex with no area around it gets (0, 1, 0).
 */
export function areaWeightedNormals(positions: Float32Array, indices: Uint32Array): Float32Array {
  const acc = new Float64Array(positions.length);
  const p = positions;
  for (let t = 0; t < indices.length; t += 3) {
    const a = indices[t], b = indices[t + 1], c = indices[t + 2];
    const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
    const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
    const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
    for (const v of [a, b, c]) {
      acc[3 * v] += nx;
      acc[3 * v + 1] += ny;
      acc[3 * v + 2] += nz;
    }
  }
  const out = new Float32Array(positions.length);
  for (let v = 0; v < out.length; v += 3) {
    const len = Math.sqrt(acc[v] * acc[v] + acc[v + 1] * acc[v + 1] + acc[v + 2] * acc[v + 2]); // not Math.hypot (slower)
    if (len > 0) {
      out[v] = acc[v] / len;
      out[v + 1] = acc[v + 1] / len;
      out[v + 2] = acc[v + 2] / len;
    } else out[v + 1] = 1;
  }
  return out;
}
