/**
 * The minimizer of a quadratic error function (QEF): the point x that minimizes the sum of squared
 * distances to a set of planes, each given by a point pᵢ on it and its unit normal nᵢ:
 * E(x) = Σ (nᵢ · (x − pᵢ))².
 *
 * Sources:
 * - Ju, Losasso, Schaefer, Warren 2002, "Dual Contouring of Hermite Data" (SIGGRAPH): the QEF of a
 *   cell's Hermite planes places the cell's vertex on sharp edges and corners.
 * - Lindstrom 2000, "Out-of-core simplification of large polygonal models" (SIGGRAPH): solve the
 *   normal equations about a reference point with a truncated pseudo-inverse, so that directions the
 *   planes do not constrain (a flat patch constrains one, a crease two) keep the reference point's
 *   coordinate instead of shooting off to infinity.
 * - Jacobi's eigenvalue method for the symmetric 3×3 normal matrix (Golub and Van Loan, "Matrix
 *   Computations", §8.5, cyclic Jacobi); the rotation formula is the stable one of Rutishauser.
 *
 * With A the m×3 matrix of normals, c the mass point (mean of the pᵢ) and bᵢ = nᵢ · (pᵢ − c), the
 * minimizer is x = c + (AᵀA)⁺ Aᵀb, where (AᵀA)⁺ keeps only the eigenvalues λ with
 * √λ ≥ `singularCutoff` · √λmax (singular values of A relative to the largest one).
 *
 * The cutoff, 0.1 by default, is a value from common practice (Lindstrom uses a relative threshold of
 * this size; common dual-contouring code uses 0.1 as well, from memory). What it means here: planes whose
 * normals spread by less than about 6° around a direction (sin 6° ≈ 0.1) count as one plane, so a gently
 * curved patch gives a vertex at its mass point moved onto the average plane; a crease of 10° or more
 * between two sets of planes is kept.
 */

const NAME = 'solveQef';

/** Options for {@link solveQef}. */
export interface SolveQefOptions {
  /**
   * Singular values of the normal matrix below this fraction of the largest are truncated (treated
   * as zero). Unitless, in (0, 1). Default: 0.1.
   */
  singularCutoff?: number;
  /** Use at most this many eigen-directions (1, 2 or 3), the largest first. Default: 3. */
  maxRank?: number;
}

export const SOLVE_QEF_DEFAULTS: Required<SolveQefOptions> = { singularCutoff: 0.1, maxRank: 3 };

/** The result of {@link solveQef}. */
export interface QefSolution {
  /** The minimizer, in the units of the input points. */
  point: [number, number, number];
  /** Directions kept after truncation: 0 (no planes), 1 (a plane), 2 (a crease), 3 (a corner). */
  rank: number;
  /** E at `point`: the sum of squared plane distances, in squared input units. */
  error: number;
  /** The mass point (mean of the plane points), the reference the solution is taken about. */
  massPoint: [number, number, number];
  /**
   * The eigenvalues of AᵀA, largest first, and their unit eigenvectors (3 floats each, same order).
   * With `coefficients` cᵢ (0 for truncated directions): point = massPoint + Σ cᵢ · axisᵢ. Callers
   * that must keep the point inside a region can move along the truncated or weakest axes.
   */
  eigenvalues: [number, number, number];
  axes: [number, number, number, number, number, number, number, number, number];
  coefficients: [number, number, number];
}

/**
 * Minimizes Σ (nᵢ · (x − pᵢ))² over the planes (pᵢ, nᵢ).
 *
 * @param points - Plane points, 3 floats per plane (any length unit; use local coordinates near 1
 *   for best precision, e.g. cell units relative to the cell's corner).
 * @param normals - Unit plane normals, 3 floats per plane (same count as `points`).
 * @param options - See {@link SolveQefOptions}.
 * @returns The minimizer about the mass point, the rank used and the error there. With no planes,
 *   the origin with rank 0.
 * @throws Error when the arrays differ in length or are not a multiple of 3, or the options are out
 *   of range.
 *
 * @example
 * // Three faces of a box corner at (0.3, 0.4, 0.5):
 * const s = solveQef([0.3, 0, 0, 0, 0.4, 0, 0, 0, 0.5], [1, 0, 0, 0, 1, 0, 0, 0, 1]);
 * // s.point ≈ [0.3, 0.4, 0.5], s.rank === 3
 */
export function solveQef(points: ArrayLike<number>, normals: ArrayLike<number>, options: SolveQefOptions = {}): QefSolution {
  const cutoff = options.singularCutoff ?? SOLVE_QEF_DEFAULTS.singularCutoff;
  const maxRank = options.maxRank ?? SOLVE_QEF_DEFAULTS.maxRank;
  if (points.length !== normals.length || points.length % 3 !== 0) {
    throw new Error(`${NAME}: points and normals must hold 3 floats per plane each (got ${points.length} and ${normals.length})`);
  }
  if (!(cutoff > 0 && cutoff < 1)) throw new Error(`${NAME}: singularCutoff must be in (0, 1) (got ${cutoff})`);
  if (!(maxRank === 1 || maxRank === 2 || maxRank === 3)) throw new Error(`${NAME}: maxRank must be 1, 2 or 3 (got ${maxRank})`);
  const m = points.length / 3;
  if (m === 0) {
    return { point: [0, 0, 0], rank: 0, error: 0, massPoint: [0, 0, 0], eigenvalues: [0, 0, 0], axes: [1, 0, 0, 0, 1, 0, 0, 0, 1], coefficients: [0, 0, 0] };
  }

  let cx = 0, cy = 0, cz = 0;
  for (let i = 0; i < m; i++) {
    cx += points[3 * i];
    cy += points[3 * i + 1];
    cz += points[3 * i + 2];
  }
  cx /= m;
  cy /= m;
  cz /= m;

  // AᵀA (symmetric, row-major 3×3), Aᵀb and bᵀb about the mass point.
  const ata = ATA;
  ata.fill(0);
  let atb0 = 0, atb1 = 0, atb2 = 0, btb = 0;
  for (let i = 0; i < m; i++) {
    const nx = normals[3 * i], ny = normals[3 * i + 1], nz = normals[3 * i + 2];
    const b = nx * (points[3 * i] - cx) + ny * (points[3 * i + 1] - cy) + nz * (points[3 * i + 2] - cz);
    ata[0] += nx * nx;
    ata[1] += nx * ny;
    ata[2] += nx * nz;
    ata[4] += ny * ny;
    ata[5] += ny * nz;
    ata[8] += nz * nz;
    atb0 += nx * b;
    atb1 += ny * b;
    atb2 += nz * b;
    btb += b * b;
  }
  ata[3] = ata[1];
  ata[6] = ata[2];
  ata[7] = ata[5];

  const vec = VEC; // eigenvectors in columns
  jacobiEigen3(ata, vec);
  const lambda = [ata[0], ata[4], ata[8]];
  const order = descendingOrder(lambda[0], lambda[1], lambda[2]);
  const lmax = lambda[order[0]];

  let yx = 0, yy = 0, yz = 0;
  let rank = 0;
  const coefficients: [number, number, number] = [0, 0, 0];
  if (lmax > 0) {
    const minLambda = cutoff * cutoff * lmax;
    for (let r = 0; r < maxRank; r++) {
      const e = order[r];
      const l = lambda[e];
      if (!(l >= minLambda)) break;
      const vx = vec[e], vy = vec[3 + e], vz = vec[6 + e];
      const coef = (vx * atb0 + vy * atb1 + vz * atb2) / l;
      coefficients[r] = coef;
      yx += coef * vx;
      yy += coef * vy;
      yz += coef * vz;
      rank++;
    }
  }
  const [o0, o1, o2] = order;
  const axes: QefSolution['axes'] = [vec[o0], vec[3 + o0], vec[6 + o0], vec[o1], vec[3 + o1], vec[6 + o1], vec[o2], vec[3 + o2], vec[6 + o2]];
  const eigenvalues: QefSolution['eigenvalues'] = [Math.max(0, lambda[o0]), Math.max(0, lambda[o1]), Math.max(0, lambda[o2])];
  // E(c + y) = yᵀ AᵀA y − 2 yᵀ Aᵀb + bᵀb, with the original AᵀA (rebuilt from the eigen-decomposition's input).
  let error = btb - 2 * (yx * atb0 + yy * atb1 + yz * atb2);
  for (let i = 0; i < m; i++) {
    const d = normals[3 * i] * yx + normals[3 * i + 1] * yy + normals[3 * i + 2] * yz;
    error += d * d;
  }
  return { point: [cx + yx, cy + yy, cz + yz], rank, error: Math.max(0, error), massPoint: [cx, cy, cz], eigenvalues, axes, coefficients };
}

/** Scratch matrices (the solver is synchronous, so one pair serves every call). */
const ATA = new Float64Array(9);
const VEC = new Float64Array(9);

/** Indices 0, 1, 2 ordered by decreasing value. */
function descendingOrder(a: number, b: number, c: number): [number, number, number] {
  if (a >= b) {
    if (b >= c) return [0, 1, 2];
    return a >= c ? [0, 2, 1] : [2, 0, 1];
  }
  if (a >= c) return [1, 0, 2];
  return b >= c ? [1, 2, 0] : [2, 1, 0];
}

/**
 * Cyclic Jacobi eigen-decomposition of a symmetric 3×3 matrix `a` (row-major). On return the
 * diagonal of `a` holds the eigenvalues and the columns of `v` the matching unit eigenvectors.
 */
function jacobiEigen3(a: Float64Array, v: Float64Array): void {
  v.fill(0);
  v[0] = v[4] = v[8] = 1;
  for (let sweep = 0; sweep < 16; sweep++) {
    const off = Math.abs(a[1]) + Math.abs(a[2]) + Math.abs(a[5]);
    const diag = Math.abs(a[0]) + Math.abs(a[4]) + Math.abs(a[8]);
    if (off <= 1e-15 * diag || off === 0) return;
    for (let pq = 0; pq < 3; pq++) {
      const p = pq === 2 ? 1 : 0;
      const q = pq === 0 ? 1 : 2;
      const apq = a[3 * p + q];
      if (apq === 0) continue;
      const app = a[4 * p], aqq = a[4 * q];
      const theta = (aqq - app) / (2 * apq);
      const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
      const c = 1 / Math.sqrt(t * t + 1);
      const s = t * c;
      // a ← Pᵀ a P with P the rotation in the (p, q) plane: P_pp = P_qq = c, P_pq = s, P_qp = −s.
      for (let k = 0; k < 3; k++) {
        const akp = a[3 * k + p], akq = a[3 * k + q];
        a[3 * k + p] = c * akp - s * akq;
        a[3 * k + q] = s * akp + c * akq;
      }
      for (let k = 0; k < 3; k++) {
        const apk = a[3 * p + k], aqk = a[3 * q + k];
        a[3 * p + k] = c * apk - s * aqk;
        a[3 * q + k] = s * apk + c * aqk;
      }
      a[3 * p + q] = a[3 * q + p] = 0;
      for (let k = 0; k < 3; k++) {
        const vkp = v[3 * k + p], vkq = v[3 * k + q];
        v[3 * k + p] = c * vkp - s * vkq;
        v[3 * k + q] = s * vkp + c * vkq;
      }
    }
  }
}
