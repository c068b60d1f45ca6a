/**
 * How much a UV layout stretches the surface: the texture stretch metrics of Sander, Snyder, Gortler
 * and Hoppe 2001, "Texture mapping progressive meshes" (SIGGRAPH 2001, §3).
 *
 * For a triangle mapped from UV (s, t) to 3D, the Jacobian's columns are S_s = ∂P/∂s and
 * S_t = ∂P/∂t; with a = S_s·S_s, b = S_s·S_t, c = S_t·S_t its singular values are
 * Γ, γ = √(((a + c) ± √((a − c)² + 4b²)) / 2). The triangle's L2 stretch is √((a + c) / 2) (the
 * root-mean-square stretch over all directions) and its L∞ stretch is Γ. Over the mesh,
 * L2 = √(Σ L2(T)² A(T) / Σ A(T)) with A the 3D area. Both are normalized by √(Σ A_uv / Σ A), so a
 * layout that is an isometry up to one global scale scores exactly 1 and any distortion scores
 * more.
 */

const NAME = 'measureUvStretch';

/** Result of {@link measureUvStretch}; both normalized so 1 is no stretch. */
export interface UvStretch {
  /** Area-weighted root-mean-square stretch (Sander et al. 2001, L2). */
  l2: number;
  /** Largest stretch in any direction of any triangle (Sander et al. 2001, L∞). */
  max: number;
  /** Triangles with zero UV area (skipped; their stretch is unbounded). */
  zeroUvArea: number;
}

/**
 * Stretch of a UV layout (see the file comment).
 * @param positions 3 floats per vertex, metres.
 * @param uvs 2 floats per vertex.
 * @param indices 3 per triangle.
 * @example
 * const { l2 } = measureUvStretch(mesh.positions, uvs, mesh.indices); // 1.0: no stretch
 */
export function measureUvStretch(positions: Float32Array, uvs: Float32Array, indices: Uint32Array): UvStretch {
  if (positions.length / 3 !== uvs.length / 2) throw new Error(`${NAME}: uvs must hold 2 floats per vertex (${positions.length / 3} vertices, ${uvs.length / 2} UVs)`);
  let sum2 = 0;
  let area3 = 0;
  let areaUv = 0;
  let max = 0;
  let zeroUvArea = 0;
  for (let t = 0; t < indices.length; t += 3) {
    const i0 = indices[t], i1 = indices[t + 1], i2 = indices[t + 2];
    const s1 = uvs[2 * i0], t1 = uvs[2 * i0 + 1];
    const s2 = uvs[2 * i1], t2 = uvs[2 * i1 + 1];
    const s3 = uvs[2 * i2], t3 = uvs[2 * i2 + 1];
    const auv = ((s2 - s1) * (t3 - t1) - (s3 - s1) * (t2 - t1)) / 2;
    if (auv === 0) {
      zeroUvArea++;
      continue;
    }
    let a = 0, b = 0, c = 0;
    const d1 = [0, 0, 0], d2 = [0, 0, 0];
    for (let k = 0; k < 3; k++) {
      const q1 = positions[3 * i0 + k], q2 = positions[3 * i1 + k], q3 = positions[3 * i2 + k];
      const ss = (q1 * (t2 - t3) + q2 * (t3 - t1) + q3 * (t1 - t2)) / (2 * auv);
      const st = (q1 * (s3 - s2) + q2 * (s1 - s3) + q3 * (s2 - s1)) / (2 * auv);
      a += ss * ss;
      b += ss * st;
      c += st * st;
      d1[k] = q2 - q1;
      d2[k] = q3 - q1;
    }
    const area = 0.5 * Math.hypot(d1[1] * d2[2] - d1[2] * d2[1], d1[2] * d2[0] - d1[0] * d2[2], d1[0] * d2[1] - d1[1] * d2[0]);
    const big = Math.sqrt(Math.max(0, (a + c + Math.sqrt((a - c) * (a - c) + 4 * b * b)) / 2));
    sum2 += ((a + c) / 2) * area;
    area3 += area;
    areaUv += Math.abs(auv);
    if (big > max) max = big;
  }
  if (area3 === 0) return { l2: 1, max: 1, zeroUvArea };
  const norm = Math.sqrt(areaUv / area3);
  return { l2: Math.sqrt(sum2 / area3) * norm, max: max * norm, zeroUvArea };
}
