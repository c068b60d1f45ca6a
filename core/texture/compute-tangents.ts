/**
 * Per-vertex tangents for tangent-space normal maps, computed the way MikkTSpace does: Mikkelsen
 * 2008, "Simulation of wrinkled surfaces revisited" (MSc thesis, University of Copenhagen), whose
 * reference implementation `mikktspace.c` (Mikkelsen 2011) is what common engines and the
 * glTF 2.0 spec ("When tangents are not specified, client implementations SHOULD calculate tangents
 * using default MikkTSpace algorithms") rely on. Matching it means an engine that recomputes
 * tangents itself gets the same frame the normal map was baked in.
 *
 * What the reference does, and what this file does for the per-vertex case (every vertex's UV
 * triangles share one orientation, which `unwrap-mesh.ts` guarantees by splitting the others):
 *
 * 1. Per triangle, with d1 = p1 − p0, d2 = p2 − p0 and (Δs, Δt) the UV differences, the
 *    unnormalized ∂P/∂s is t31·d1 − t21·d2 (thesis eq. for the tangent from the UV gradient); its
 *    direction times the sign of the triangle's UV area is the triangle's tangent. The sign also
 *    says whether the triangle is "orientation preserving". Triangles of zero UV area contribute
 *    nothing (the reference's GROUP_WITH_ANY).
 * 2. Per corner, that tangent is projected onto the plane of the vertex normal and normalized, and
 *    weighted by the corner's angle, measured between its two edges after they too are projected
 *    onto that plane and normalized.
 * 3. Per vertex (the reference's group of corners sharing position, normal, UV and orientation), the
 *    weighted sum is normalized. The handedness is +1 for orientation-preserving corners, −1 otherwise.
 *
 * Where the reference would differ: it welds corners by equal position, normal and UV (here the
 * index does that, and the unwrapper never gives two vertices the same UV); it splits a vertex whose
 * same-orientation corners form separate fans (here they share one tangent); it computes in float32
 * (here float64: tangents agree to a small fraction of a degree, see the test against three.js's
 * port of the reference).
 *
 * glTF's UV convention: MikkTSpace assumes t grows up the image; glTF's v grows down it (origin at
 * the top-left). The tangent frame glTF wants has its bitangent up the image (the spec's normal
 * texture: "+Y is up"), with bitangent = cross(normal, tangent.xyz) × tangent.w. So t = 1 − v goes
 * in, which leaves ∂P/∂s unchanged and flips the handedness: the same as running the reference on
 * glTF UVs and negating w, as three.js's `computeMikkTSpaceTangents` does for glTF.
 */

const NAME = 'computeTangents';

/**
 * MikkTSpace tangents, one per vertex (see the file comment).
 * @param positions 3 floats per vertex, metres.
 * @param normals 3 floats per vertex, unit.
 * @param uvs 2 floats per vertex, glTF convention (v down the image).
 * @param indices 3 per triangle.
 * @returns 4 floats per vertex: unit tangent xyz (perpendicular to the normal) and handedness w = ±1.
 * @example
 * const tangents = computeTangents(mesh.positions, mesh.normals!, uvs, mesh.indices);
 */
export function computeTangents(positions: Float32Array, normals: Float32Array, uvs: Float32Array, indices: Uint32Array): Float32Array {
  const V = positions.length / 3;
  if (normals.length !== positions.length) throw new Error(`${NAME}: normals must hold 3 floats per vertex`);
  if (uvs.length !== 2 * V) throw new Error(`${NAME}: uvs must hold 2 floats per vertex`);
  const sum = new Float64Array(3 * V);
  const handedness = new Float64Array(V);
  const n = [0, 0, 0];
  const e1 = [0, 0, 0];
  const e2 = [0, 0, 0];
  const corner = [0, 0, 0];
  for (let t = 0; t < indices.length; t += 3) {
    const i0 = indices[t], i1 = indices[t + 1], i2 = indices[t + 2];
    // MikkTSpace's t axis grows up the image: t = 1 − v.
    const s21 = uvs[2 * i1] - uvs[2 * i0], t21 = -(uvs[2 * i1 + 1] - uvs[2 * i0 + 1]);
    const s31 = uvs[2 * i2] - uvs[2 * i0], t31 = -(uvs[2 * i2 + 1] - uvs[2 * i0 + 1]);
    const area2 = s21 * t31 - t21 * s31;
    if (area2 === 0) continue;
    const sign = area2 > 0 ? 1 : -1;
    let ox = 0, oy = 0, oz = 0;
    for (let k = 0; k < 3; k++) {
      const d1 = positions[3 * i1 + k] - positions[3 * i0 + k];
      const d2 = positions[3 * i2 + k] - positions[3 * i0 + k];
      const os = t31 * d1 - t21 * d2;
      if (k === 0) ox = os;
      else if (k === 1) oy = os;
      else oz = os;
    }
    const olen = Math.hypot(ox, oy, oz);
    if (olen === 0) continue;
    ox *= sign / olen;
    oy *= sign / olen;
    oz *= sign / olen;
    const tri = [i0, i1, i2];
    for (let c = 0; c < 3; c++) {
      const v = tri[c], prev = tri[(c + 2) % 3], next = tri[(c + 1) % 3];
      for (let k = 0; k < 3; k++) n[k] = normals[3 * v + k];
      // Tangent projected onto the normal's plane.
      const dn = n[0] * ox + n[1] * oy + n[2] * oz;
      corner[0] = ox - dn * n[0];
      corner[1] = oy - dn * n[1];
      corner[2] = oz - dn * n[2];
      const clen = Math.hypot(corner[0], corner[1], corner[2]);
      if (clen === 0) continue;
      // Corner angle between the projected edges.
      for (let k = 0; k < 3; k++) {
        e1[k] = positions[3 * prev + k] - positions[3 * v + k];
        e2[k] = positions[3 * next + k] - positions[3 * v + k];
      }
      projectNormalize(e1, n);
      projectNormalize(e2, n);
      const angle = Math.acos(Math.min(1, Math.max(-1, e1[0] * e2[0] + e1[1] * e2[1] + e1[2] * e2[2])));
      sum[3 * v] += (angle * corner[0]) / clen;
      sum[3 * v + 1] += (angle * corner[1]) / clen;
      sum[3 * v + 2] += (angle * corner[2]) / clen;
      handedness[v] += sign * Math.max(angle, 1e-12);
    }
  }
  const out = new Float32Array(4 * V);
  for (let v = 0; v < V; v++) {
    let x = sum[3 * v], y = sum[3 * v + 1], z = sum[3 * v + 2];
    let len = Math.hypot(x, y, z);
    if (!(len > 0)) {
      // No triangle gave this vertex a tangent: any unit vector perpendicular to the normal.
      const nx = normals[3 * v], ny = normals[3 * v + 1], nz = normals[3 * v + 2];
      if (Math.abs(nx) < 0.9) [x, y, z] = [1 - nx * nx, -nx * ny, -nx * nz];
      else [x, y, z] = [-ny * nx, 1 - ny * ny, -ny * nz];
      len = Math.hypot(x, y, z) || 1;
    }
    out[4 * v] = x / len;
    out[4 * v + 1] = y / len;
    out[4 * v + 2] = z / len;
    out[4 * v + 3] = handedness[v] < 0 ? -1 : 1;
  }
  return out;
}

/** v ← normalize(v − (v·n) n), left as is when that is zero. */
function projectNormalize(v: number[], n: number[]): void {
  const d = v[0] * n[0] + v[1] * n[1] + v[2] * n[2];
  const x = v[0] - d * n[0], y = v[1] - d * n[1], z = v[2] - d * n[2];
  const len = Math.hypot(x, y, z);
  if (len > 0) {
    v[0] = x / len;
    v[1] = y / len;
    v[2] = z / len;
  }
}
