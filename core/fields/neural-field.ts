/**
 * A field backed by a neural network (an ONNX model run by the app's inference session).
 *
 * Input convention (shared fixture README, "The input convention"):
 * - exactly one input, `points`: float32 `[N, 3]`, first axis dynamic; rows are (x, y, z) in metres;
 * - exactly one of the outputs `sdf` | `density` | `occupancy`, float32 `[N, 1]`; optional `color`
 *   float32 `[N, 3]` (linear RGB 0..1). Other outputs are ignored;
 * - metadata_props `field.kind` (must agree with the output name), `field.bounds`
 *   (`xmin,ymin,zmin,xmax,ymax,zmax`, metres), `field.units` (`m`), optional `field.level`.
 *
 * Core does not touch onnxruntime: the app passes `run`, which feeds one batch of points to the
 * session and returns its outputs by name. Non-finite outputs are passed through untouched; the
 * sampler deals with them.
 */
import type { Bounds, FieldKind } from '../types.js';
import { FIELD_KINDS, FieldkilnError, boundsProblem, throwIfAborted } from '../types.js';
import type { Field, FieldDescription } from './field.js';
import { defaultLevelFor } from './field.js';

const NAME = 'createNeuralField';

/** An input or output of a model as the inference session reports it. */
export interface NeuralValueInfo {
  /** Input or output name. */
  name: string;
  /** Element type, e.g. `float32` (`float` is accepted as a synonym). */
  type: string;
  /** Dimensions; a string (or a negative number) is a symbolic, dynamic dimension. `[]` when unknown. */
  shape: (number | string)[];
}

/** Values the user gives on the command line; each wins over the model's metadata. */
export interface NeuralFieldOverrides {
  /** `--kind`: must agree with the model's output name. */
  kind?: FieldKind;
  /** `--bounds`, metres. */
  bounds?: Bounds;
  /** `--level`, in the output's own units. */
  level?: number;
}

/** Options for {@link createNeuralField}. */
export interface NeuralFieldOptions {
  /** File name or label; starts every error message. */
  name: string;
  /**
   * Runs the model on `count` points (`points` holds `3 * count` floats, `[count, 3]`) and resolves
   * to its outputs by name, each flattened in C order (`sdf`: `count` floats, `color`: `3 * count`).
   */
  run: (points: Float32Array, count: number) => Promise<Record<string, Float32Array>>;
  /** The model's inputs. */
  inputs: NeuralValueInfo[];
  /** The model's outputs. */
  outputs: NeuralValueInfo[];
  /** The model's `metadata_props`. */
  metadata: Record<string, string>;
  /** Command-line overrides of kind, bounds and level. */
  overrides?: NeuralFieldOverrides;
  /** Points per `run` call. Default: {@link NEURAL_DEFAULTS}.batchSize. */
  batchSize?: number;
  /** Extra facts for `description.details` (opset, producer, ...). */
  details?: Record<string, unknown>;
}

/**
 * Defaults of {@link createNeuralField}. `batchSize`: points per inference call. With one thread 65 536 ran
 * fastest (DEPENDENCIES.md §1). With two (the default on 2 cores), measured 2026-12-02 on a 2-core VM,
 * 1 Mi random points per call, best of 4, alternating: 16 384 against 65 536 gave 7.6e5 vs 7.4e5 points/s
 * on sphere_sdf.onnx, 5.8e6 vs 4.3e6 on torus_sdf.onnx and 2.70e5 vs 2.67e5 on lantern_density.onnx; in
 * depth-9 bakes the torus's inference took 1.39–1.53 s against 1.76–1.94 s, the sphere's the same
 * (8.95–9.16 s against 8.93–9.09 s). Smaller calls also let an abort land sooner.
 */
export const NEURAL_DEFAULTS = { batchSize: 16384 } as const;

/** The command-line options that supply what a model's metadata lacks. */
const CLI = {
  kind: '--kind sdf|density|occupancy',
  bounds: '--bounds xmin,ymin,zmin,xmax,ymax,zmax',
  level: '--level <value>',
};

/**
 * Creates a {@link Field} over a neural network that follows Fieldkiln's input convention (see the
 * file header). It checks the model's inputs, outputs and metadata up front and names what the
 * model actually has when something does not fit.
 *
 * - `kind`: `overrides.kind`, else metadata `field.kind`; either must equal the output's name.
 * - `bounds`: `overrides.bounds`, else metadata `field.bounds` (metres).
 * - `defaultLevel`: `overrides.level` > metadata `field.level` > 0 for sdf and occupancy. A density
 *   model with no level anywhere is an error (there is no universal density level).
 * - `evaluate` runs the model in batches of `batchSize` points (checking `signal` between batches) and
 *   checks each output's length: `count` floats for the scalar, `3 * count` for `color`.
 * - `lipschitz` is undefined: a network promises no gradient bound.
 * - `costly` is true: the bake asks a network for as few points as it can.
 *
 * @throws FieldkilnError (message starts with `name`) for a wrong input, no or several of
 *   sdf/density/occupancy outputs, wrong output types or shapes, missing or bad kind/bounds/level
 *   metadata (the message names the CLI option that supplies it), or units other than metres.
 *   `evaluate`/`evaluateColor` reject with a FieldkilnError naming the output when it is missing or
 *   has the wrong length.
 *
 * @example
 * ```ts
 * const field = createNeuralField({ name: 'ball.onnx', run, inputs, outputs, metadata });
 * const values = await field.evaluate(new Float32Array([0, 0, 0, 0.5, 0, 0])); // 2 values
 * ```
 */
export function createNeuralField(opts: NeuralFieldOptions): Field {
  const { name, run, inputs, outputs, metadata } = opts;
  const overrides = opts.overrides ?? {};
  const batchSize = opts.batchSize ?? NEURAL_DEFAULTS.batchSize;
  if (typeof run !== 'function') throw new Error(`${NAME}: run must be a function`);
  if (!Number.isInteger(batchSize) || batchSize < 1) throw new Error(`${NAME}: batchSize must be a positive integer (got ${batchSize})`);
  if (!Array.isArray(inputs) || !Array.isArray(outputs)) throw new Error(`${NAME}: inputs and outputs must be arrays`);

  const fail = (msg: string): never => {
    throw new FieldkilnError(`${name}: ${msg}`);
  };

  // Input: exactly one, `points`, float32 [N,3] with a dynamic first axis.
  const input = inputs.length === 1 ? inputs[0] : undefined;
  if (!input || input.name !== 'points' || !isFloat32(input.type) || !hasShape(input.shape, 3)) {
    fail(
      "expected an input named 'points' of shape [N,3] float32 (N dynamic) and no other inputs; " +
        `the model has inputs: ${describeValues(inputs)}`,
    );
  }
  const inputName = input!.name;

  // Outputs: exactly one of sdf | density | occupancy [N,1]; optional color [N,3].
  const kindOutputs = outputs.filter((o) => (FIELD_KINDS as readonly string[]).includes(o.name));
  if (kindOutputs.length !== 1) {
    fail(
      `expected exactly one output named sdf, density or occupancy, of shape [N,1] float32 (plus an optional color [N,3]); ` +
        `the model has outputs: ${describeValues(outputs)}`,
    );
  }
  const valueOutput = kindOutputs[0];
  if (!isFloat32(valueOutput.type) || !hasShape(valueOutput.shape, 1)) {
    fail(`output '${valueOutput.name}' must be float32 of shape [N,1] (N dynamic); the model has ${describeValue(valueOutput)}`);
  }
  const outName = valueOutput.name as FieldKind;
  const colorOutput = outputs.find((o) => o.name === 'color');
  if (colorOutput && (!isFloat32(colorOutput.type) || !hasShape(colorOutput.shape, 3))) {
    fail(`output 'color' must be float32 of shape [N,3] (N dynamic, linear RGB); the model has ${describeValue(colorOutput)}`);
  }

  // Kind.
  const metaKind = metadata['field.kind'];
  let kind: FieldKind;
  if (overrides.kind !== undefined) {
    if (overrides.kind !== outName) {
      fail(`--kind ${overrides.kind} disagrees with the model's output, which is named '${outName}'`);
    }
    kind = overrides.kind;
  } else if (metaKind === undefined) {
    return fail(`the model has no 'field.kind' metadata; pass ${CLI.kind} (its output is named '${outName}')`);
  } else {
    const k = metaKind.trim();
    if (!(FIELD_KINDS as readonly string[]).includes(k)) {
      fail(`metadata 'field.kind' is '${metaKind}'; expected one of ${FIELD_KINDS.join(', ')} (or pass ${CLI.kind})`);
    }
    if (k !== outName) {
      fail(`metadata 'field.kind' is '${k}' but the model's output is named '${outName}'; they must agree`);
    }
    kind = k as FieldKind;
  }

  // Bounds.
  let bounds: Bounds;
  if (overrides.bounds !== undefined) {
    const bp = boundsProblem(overrides.bounds);
    if (bp !== null) fail(`--bounds: ${bp}`);
    bounds = overrides.bounds.slice() as Bounds;
  } else {
    const text = metadata['field.bounds'];
    if (text === undefined) {
      return fail(`the model has no 'field.bounds' metadata; pass ${CLI.bounds} (metres)`);
    }
    const parsed = parseNumberList(text);
    const bp = parsed ? boundsProblem(parsed) : 'it is not a comma-separated list of numbers';
    if (bp !== null) fail(`metadata 'field.bounds' ('${text}') is not usable: ${bp}; fix it or pass ${CLI.bounds}`);
    bounds = parsed as Bounds;
  }

  // Units.
  const units = metadata['field.units'];
  if (units !== undefined && units.trim() !== 'm') {
    fail(`metadata 'field.units' is '${units}'; Fieldkiln reads models whose points are in metres ('m')`);
  }

  // Level.
  let level: number | undefined;
  if (overrides.level !== undefined) {
    if (typeof overrides.level !== 'number' || !Number.isFinite(overrides.level)) fail(`--level must be a finite number (got ${overrides.level})`);
    level = overrides.level;
  } else if (metadata['field.level'] !== undefined) {
    const text = metadata['field.level'];
    const v = text.trim() === '' ? NaN : Number(text);
    if (!Number.isFinite(v)) fail(`metadata 'field.level' ('${text}') is not a finite number; fix it or pass ${CLI.level}`);
    level = v;
  } else {
    level = defaultLevelFor(kind);
    if (level === undefined) {
      fail(`this density model declares no 'field.level' and density has no standard level; pass ${CLI.level} (the density at the surface)`);
    }
  }

  const description: FieldDescription = {
    source: 'onnx',
    name,
    outputs: colorOutput ? [outName, 'color'] : [outName],
    details: {
      ...opts.details,
      inputs: inputs.map(describeValue),
      outputs: outputs.map(describeValue),
      metadata: { ...metadata },
      batchSize,
    },
  };

  /** Runs the model over all points in batches and gathers output `key` (`width` floats per point). */
  const gather = async (points: Float32Array, key: string, width: number, signal: AbortSignal | undefined): Promise<Float32Array> => {
    if (!(points instanceof Float32Array) || points.length % 3 !== 0) {
      throw new Error(`neuralField.evaluate: points must be a Float32Array of 3 floats per point`);
    }
    const n = points.length / 3;
    const out = new Float32Array(n * width);
    for (let start = 0; start < n; start += batchSize) {
      throwIfAborted(signal);
      const count = Math.min(batchSize, n - start);
      const result = await run(points.subarray(3 * start, 3 * (start + count)), count);
      const values = result[key];
      if (!values) fail(`the model returned no output '${key}' when run on ${count} points (feeding '${inputName}')`);
      if (values.length !== count * width) {
        fail(
          `output '${key}' returned ${values.length} values for ${count} points; expected shape [N,${width}] ` +
            `(${count * width} values)`,
        );
      }
      out.set(values, start * width);
    }
    throwIfAborted(signal);
    return out;
  };

  const field: Field = {
    kind,
    bounds,
    defaultLevel: level,
    hasColor: colorOutput !== undefined,
    lipschitz: undefined,
    costly: true,
    description,
    evaluate: (points, signal) => gather(points, outName, 1, signal),
  };
  if (colorOutput) field.evaluateColor = (points, signal) => gather(points, 'color', 3, signal);
  return field;
}

function isFloat32(type: string): boolean {
  return type === 'float32' || type === 'float';
}

function isDynamic(d: number | string): boolean {
  return typeof d === 'string' || d < 0;
}

/** True when the shape is unknown (`[]`), or `[N, width]` with N dynamic and width `width` (or symbolic). */
function hasShape(shape: (number | string)[], width: number): boolean {
  if (!Array.isArray(shape) || shape.length === 0) return true;
  return shape.length === 2 && isDynamic(shape[0]) && (shape[1] === width || typeof shape[1] === 'string');
}

function describeValue(v: NeuralValueInfo): string {
  const shape = Array.isArray(v.shape) && v.shape.length > 0 ? `[${v.shape.join(',')}]` : '[unknown shape]';
  return `${v.name} ${v.type} ${shape}`;
}

function describeValues(list: NeuralValueInfo[]): string {
  return list.length === 0 ? '(none)' : list.map(describeValue).join(', ');
}

function parseNumberList(text: string): number[] | null {
  const parts = text.split(',').map((s) => s.trim());
  if (parts.some((s) => s === '')) return null;
  const nums = parts.map(Number);
  return nums.some((n) => Number.isNaN(n)) ? null : nums;
}
