/**
 * A field backed by a dense grid of samples, read between samples by trilinear interpolation.
 *
 * Grid convention (see the shared fixture README): the array has shape `[nz, ny, nx]` in C order, so
 * `values[(k * ny + j) * nx + i]` is the field at `(x_i, y_j, z_k)` and x changes fastest. Samples sit
 * on nodes: `x_i = xmin + i * (xmax - xmin) / (nx - 1)` (the same for y and z), so the first and
 * last samples lie exactly on the bounds. Spacing may differ per axis.
 *
 * The sidecar is a JSON object: `kind` (sdf | density | occupancy), `bounds` (six numbers,
 * metres), and optionally `shape` ([nz, ny, nx], must match the array), `level`, `units` (`"m"`),
 * `axis_order` (`"zyx"`) and `color_file` (Fieldkiln's own key: the name of a float32 `.npy` of
 * shape `[nz, ny, nx, 3]` holding linear RGB at the same nodes; the app reads it and passes
 * `colors`).
 *
 * Interpolation: standard trilinear interpolation of the eight corners of the cell holding the
 * point (three nested linear interpolations, x then y then z). Points outside the bounds are clamped
 * onto the box, so they get the value of the nearest boundary point of the interpolant.
 */
import type { Bounds, FieldKind } from '../types.js';
import { FIELD_KINDS, FieldkilnError, boundsProblem, throwIfAborted } from '../types.js';
import type { Field, FieldDescription } from './field.js';
import { defaultLevelFor } from './field.js';

const NAME = 'createGridField';

/** Options for {@link createGridField}. */
export interface GridFieldOptions {
  /** The samples, `nz * ny * nx` floats in C order of shape `[nz, ny, nx]` (x fastest). */
  values: Float32Array;
  /** Grid shape `[nz, ny, nx]`; each at least 2. */
  shape: [number, number, number];
  /** The parsed JSON sidecar (validated here; see the file header for its keys). */
  sidecar: unknown;
  /** File name or label, used in error messages and the description. */
  name: string;
  /** Optional linear RGB per node, `nz * ny * nx * 3` floats, shape `[nz, ny, nx, 3]`. */
  colors?: Float32Array;
}

/**
 * Creates a {@link Field} from a dense grid of node samples and its sidecar.
 *
 * - `evaluate` interpolates trilinearly; points outside the bounds clamp to the boundary samples.
 *   A NaN coordinate gives NaN. Throughput is several million points per second (no per-point allocation).
 * - `defaultLevel` is the sidecar's `level`, else 0 for sdf and occupancy, else undefined (density).
 * - `lipschitz` is `Math.sqrt(3)` for sdf grids, undefined otherwise. Reason: if the samples are
 *   1-Lipschitz (a true SDF sampled at nodes), each finite difference along an axis,
 *   `(v[i+1] - v[i]) / h`, has magnitude ≤ 1. Inside a cell each partial derivative of the trilinear
 *   interpolant is a convex combination (bilinear weights of the other two axes) of four such
 *   differences, so it is ≤ 1 in magnitude and `|∇| ≤ √3`. The interpolant is continuous across
 *   cells and clamping is a 1-Lipschitz projection, so the bound holds everywhere.
 * - `hasColor` when `colors` is given; `evaluateColor` interpolates the three channels the same way.
 *
 * @throws FieldkilnError (message starts with `name`) when the sidecar is not an object, `kind` is
 *   missing or unknown, `bounds` is missing or not a box with min < max on each axis, `shape`
 *   disagrees with the array, `level` is not a finite number, `units` is not `"m"`, `axis_order` is
 *   not `"zyx"`, or an axis has fewer than 2 samples.
 * @throws Error (`createGridField: ...`) on misuse: `values`/`colors` length not matching `shape`.
 *
 * @example
 * ```ts
 * const { shape, data } = parseNpy(bytes, 'ball.npy');
 * const field = createGridField({ values: data, shape: shape as [number, number, number], sidecar: JSON.parse(text), name: 'ball.npy' });
 * const v = await field.evaluate(new Float32Array([0, 0, 0])); // one value
 * ```
 */
export function createGridField(opts: GridFieldOptions): Field {
  const { values, shape, sidecar, name, colors } = opts;
  if (!(values instanceof Float32Array)) throw new Error(`${NAME}: values must be a Float32Array`);
  if (!Array.isArray(shape) || shape.length !== 3 || !shape.every((n) => Number.isInteger(n) && n >= 0)) {
    throw new Error(`${NAME}: shape must be three non-negative integers [nz, ny, nx]`);
  }
  const [nz, ny, nx] = shape;
  const count = nz * ny * nx;
  if (values.length !== count) {
    throw new Error(`${NAME}: values has ${values.length} floats, shape [${shape.join(', ')}] needs ${count}`);
  }
  if (colors !== undefined && (!(colors instanceof Float32Array) || colors.length !== count * 3)) {
    throw new Error(`${NAME}: colors must be a Float32Array of ${count * 3} floats (shape [${shape.join(', ')}, 3])`);
  }

  const fail = (msg: string): never => {
    throw new FieldkilnError(`${name}: ${msg}`);
  };
  if (typeof sidecar !== 'object' || sidecar === null || Array.isArray(sidecar)) {
    fail('the sidecar must be a JSON object with "kind" and "bounds"');
  }
  const sc = sidecar as Record<string, unknown>;

  if (sc.kind === undefined) fail(`the sidecar has no "kind" (one of ${FIELD_KINDS.join(', ')})`);
  if (typeof sc.kind !== 'string' || !(FIELD_KINDS as readonly string[]).includes(sc.kind)) {
    fail(`the sidecar's "kind" is ${JSON.stringify(sc.kind)}; expected one of ${FIELD_KINDS.join(', ')}`);
  }
  const kind = sc.kind as FieldKind;

  if (sc.bounds === undefined) fail('the sidecar has no "bounds" ([xmin, ymin, zmin, xmax, ymax, zmax] in metres)');
  const bp = boundsProblem(sc.bounds as number[]);
  if (bp !== null) fail(`the sidecar's "bounds" are not usable: ${bp}`);
  const bounds = (sc.bounds as number[]).slice() as Bounds;

  if (sc.shape !== undefined) {
    const s = sc.shape;
    if (!Array.isArray(s) || s.length !== 3 || s.some((v, i) => v !== shape[i])) {
      fail(
        `the sidecar's "shape" ${JSON.stringify(s)} does not match the array's shape [${shape.join(', ')}] ` +
          '(both are [nz, ny, nx])',
      );
    }
  }
  if (nx < 2 || ny < 2 || nz < 2) {
    fail(`the grid has shape [${shape.join(', ')}] ([nz, ny, nx]); every axis needs at least 2 samples`);
  }
  if (sc.level !== undefined && (typeof sc.level !== 'number' || !Number.isFinite(sc.level))) {
    fail(`the sidecar's "level" is ${JSON.stringify(sc.level)}; it must be a finite number`);
  }
  if (sc.units !== undefined && sc.units !== 'm') {
    fail(`the sidecar's "units" is ${JSON.stringify(sc.units)}; Fieldkiln grids are in metres ("m")`);
  }
  if (sc.axis_order !== undefined && sc.axis_order !== 'zyx') {
    fail(`the sidecar's "axis_order" is ${JSON.stringify(sc.axis_order)}; Fieldkiln reads [nz, ny, nx] arrays ("zyx")`);
  }
  const defaultLevel = typeof sc.level === 'number' ? sc.level : defaultLevelFor(kind);

  const grid: GridGeometry = {
    nx,
    ny,
    nz,
    x0: bounds[0],
    y0: bounds[1],
    z0: bounds[2],
    sx: (nx - 1) / (bounds[3] - bounds[0]),
    sy: (ny - 1) / (bounds[4] - bounds[1]),
    sz: (nz - 1) / (bounds[5] - bounds[2]),
  };
  const spacing = [(bounds[3] - bounds[0]) / (nx - 1), (bounds[4] - bounds[1]) / (ny - 1), (bounds[5] - bounds[2]) / (nz - 1)];

  const description: FieldDescription = {
    source: 'grid',
    name,
    outputs: colors ? [kind, 'color'] : [kind],
    details: {
      shape_zyx: [nz, ny, nx],
      spacing_xyz: spacing,
      level: defaultLevel,
      ...(typeof sc.color_file === 'string' ? { color_file: sc.color_file } : {}),
    },
  };

  const field: Field = {
    kind,
    bounds,
    defaultLevel,
    hasColor: colors !== undefined,
    lipschitz: kind === 'sdf' ? Math.sqrt(3) : undefined,
    description,
    samples: { values, dims: [nx, ny, nz], origin: [bounds[0], bounds[1], bounds[2]], spacing: spacing as [number, number, number] },
    async evaluate(points: Float32Array, signal?: AbortSignal): Promise<Float32Array> {
      checkPoints(points, 'evaluate');
      throwIfAborted(signal);
      const out = new Float32Array(points.length / 3);
      interpolateScalar(grid, values, points, out);
      return out;
    },
  };
  if (colors) {
    field.evaluateColor = async (points: Float32Array, signal?: AbortSignal): Promise<Float32Array> => {
      checkPoints(points, 'evaluateColor');
      throwIfAborted(signal);
      const out = new Float32Array(points.length);
      interpolateRgb(grid, colors, points, out);
      return out;
    };
  }
  return field;
}

interface GridGeometry {
  nx: number;
  ny: number;
  nz: number;
  /** Bounds minimum, metres. */
  x0: number;
  y0: number;
  z0: number;
  /** Grid steps per metre along each axis: (n - 1) / extent. */
  sx: number;
  sy: number;
  sz: number;
}

function checkPoints(points: Float32Array, fn: string): void {
  if (!(points instanceof Float32Array) || points.length % 3 !== 0) {
    throw new Error(`gridField.${fn}: points must be a Float32Array of 3 floats per point`);
  }
}

/** Trilinear interpolation of one channel. `out[p]` for point p; NaN coordinates give NaN. */
function interpolateScalar(g: GridGeometry, v: Float32Array, points: Float32Array, out: Float32Array): void {
  const { nx, ny, nz, x0, y0, z0, sx, sy, sz } = g;
  const mx = nx - 1;
  const my = ny - 1;
  const mz = nz - 1;
  const strideZ = nx * ny;
  const n = out.length;
  for (let p = 0; p < n; p++) {
    let fx = (points[3 * p] - x0) * sx;
    let fy = (points[3 * p + 1] - y0) * sy;
    let fz = (points[3 * p + 2] - z0) * sz;
    if (fx !== fx || fy !== fy || fz !== fz) {
      out[p] = NaN;
      continue;
    }
    fx = fx > 0 ? (fx < mx ? fx : mx) : 0;
    fy = fy > 0 ? (fy < my ? fy : my) : 0;
    fz = fz > 0 ? (fz < mz ? fz : mz) : 0;
    let i = fx | 0;
    let j = fy | 0;
    let k = fz | 0;
    if (i === mx) i = mx - 1;
    if (j === my) j = my - 1;
    if (k === mz) k = mz - 1;
    const tx = fx - i;
    const ty = fy - j;
    const tz = fz - k;
    const ux = 1 - tx;
    const b = (k * ny + j) * nx + i;
    const b1 = b + nx;
    const b2 = b + strideZ;
    const b3 = b2 + nx;
    const c00 = v[b] * ux + v[b + 1] * tx;
    const c10 = v[b1] * ux + v[b1 + 1] * tx;
    const c01 = v[b2] * ux + v[b2 + 1] * tx;
    const c11 = v[b3] * ux + v[b3 + 1] * tx;
    const c0 = c00 * (1 - ty) + c10 * ty;
    const c1 = c01 * (1 - ty) + c11 * ty;
    out[p] = c0 * (1 - tz) + c1 * tz;
  }
}

/** Trilinear interpolation of three interleaved channels (`[nz, ny, nx, 3]`). */
function interpolateRgb(g: GridGeometry, v: Float32Array, points: Float32Array, out: Float32Array): void {
  const { nx, ny, nz, x0, y0, z0, sx, sy, sz } = g;
  const mx = nx - 1;
  const my = ny - 1;
  const mz = nz - 1;
  const strideY = 3 * nx;
  const strideZ = 3 * nx * ny;
  const n = out.length / 3;
  for (let p = 0; p < n; p++) {
    let fx = (points[3 * p] - x0) * sx;
    let fy = (points[3 * p + 1] - y0) * sy;
    let fz = (points[3 * p + 2] - z0) * sz;
    if (fx !== fx || fy !== fy || fz !== fz) {
      out[3 * p] = out[3 * p + 1] = out[3 * p + 2] = NaN;
      continue;
    }
    fx = fx > 0 ? (fx < mx ? fx : mx) : 0;
    fy = fy > 0 ? (fy < my ? fy : my) : 0;
    fz = fz > 0 ? (fz < mz ? fz : mz) : 0;
    let i = fx | 0;
    let j = fy | 0;
    let k = fz | 0;
    if (i === mx) i = mx - 1;
    if (j === my) j = my - 1;
    if (k === mz) k = mz - 1;
    const tx = fx - i;
    const ty = fy - j;
    const tz = fz - k;
    const ux = 1 - tx;
    const uy = 1 - ty;
    const uz = 1 - tz;
    for (let c = 0; c < 3; c++) {
      const b = 3 * ((k * ny + j) * nx + i) + c;
      const b1 = b + strideY;
      const b2 = b + strideZ;
      const b3 = b2 + strideY;
      const c00 = v[b] * ux + v[b + 3] * tx;
      const c10 = v[b1] * ux + v[b1 + 3] * tx;
      const c01 = v[b2] * ux + v[b2 + 3] * tx;
      const c11 = v[b3] * ux + v[b3 + 3] * tx;
      out[3 * p + c] = (c00 * uy + c10 * ty) * uz + (c01 * uy + c11 * ty) * tz;
    }
  }
}
