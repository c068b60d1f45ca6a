/**
 * Opens a field file from disk and returns a ready {@link Field}: the Node-side edge over core's
 * field sources.
 *
 * - `.onnx`: a neural field run by onnxruntime-node (CPU, one thread, sequential, full graph
 *   optimisation; no custom operator libraries). Metadata is read from the protobuf by core.
 * - `.npy`: a dense grid; its sidecar is the `.json` with the same base name next to it. An optional
 *   sidecar key `color_file` names a float32 `[nz, ny, nx, 3]` `.npy` of linear RGB, relative to the sidecar.
 * - `.json`: a procedural recipe (core/fields/recipe).
 *
 * Every problem with the file (missing, empty, a directory, unreadable, wrong extension, wrong
 * content) becomes a FieldkilnError whose message starts with the file name.
 */
import { readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { availableParallelism } from 'node:os';
import * as ort from 'onnxruntime-node';
import type { Bounds, FieldKind } from '../../core/types.js';
import { FieldkilnError, boundsProblem } from '../../core/types.js';
import type { Field } from '../../core/fields/field.js';
import { parseNpy } from '../../core/fields/npy.js';
import { createGridField } from '../../core/fields/grid-field.js';
import { createNeuralField, type NeuralValueInfo } from '../../core/fields/neural-field.js';
import { OnnxFormatError, readOnnxModelInfo } from '../../core/fields/onnx-metadata.js';
import { createRecipeField } from '../../core/fields/recipe/recipe-field.js';
import { poolField } from '../node/field-worker-pool.js';

/** Command-line values that win over what the file declares. */
export interface FieldOverrides {
  /** `--kind`. Must agree with what the file holds (the model's output name, the recipe's kind). */
  kind?: FieldKind;
  /** `--bounds`, metres. */
  bounds?: Bounds;
  /** `--level`, in the field's own units. */
  level?: number;
}

/** Extra options of {@link openField}. */
export interface OpenFieldOptions {
  /** Points per ONNX inference call. Default: NEURAL_DEFAULTS.batchSize. */
  batchSize?: number;
  /** onnxruntime intra-op threads. Default: ONNX_SESSION_OPTIONS.intraOpNumThreads. */
  intraOpNumThreads?: number;
  /** Worker threads for JavaScript fields (recipes, grids). Default: the number of cores. 1 = no workers. */
  workers?: number;
}

/** The extensions {@link openField} reads, with what each holds. */
export const FIELD_EXTENSIONS: Readonly<Record<string, string>> = {
  '.onnx': 'neural field, an ONNX model',
  '.npy': 'dense grid, a NumPy array with a .json sidecar',
  '.json': 'procedural recipe',
};

/**
 * onnxruntime session options. Intra-op threads: one per core, chosen by measurement (`npm run bench`,
 * 2026-12-02, 2-core machine, otherwise idle): 2 threads against 1 gave 5.6e5 vs 3.3e5 points/s on
 * sphere_sdf.onnx, 2.2e5 vs 1.3e5 on lantern_density.onnx and 3.3e6 vs 2.6e6 on torus_sdf.onnx at batch
 * 65 536 (batches of 16 384–262 144 were within 10% of each other there; on a second 2-core VM, 2 threads
 * gave 7.4e5–8.0e5 vs 3.8e5–4.1e5 on sphere_sdf.onnx, and 16 384 points per call was fastest: see
 * NEURAL_DEFAULTS). DEPENDENCIES.md §1 saw 1 thread win
 * on a machine busy with other jobs; on a busy machine pass fewer threads (OpenFieldOptions).
 * `logSeverityLevel: 3` (errors only) keeps the runtime's own warnings (e.g. "Error merging shape
 * info") off the console; Fieldkiln checks the outputs itself and reports in its own words.
 */
export const ONNX_SESSION_OPTIONS: ort.InferenceSession.SessionOptions = {
  intraOpNumThreads: Math.max(1, availableParallelism()),
  interOpNumThreads: 1,
  executionMode: 'sequential',
  graphOptimizationLevel: 'all',
  logSeverityLevel: 3,
};

/**
 * Opens `filePath` by its extension (see the file header) and returns a ready field.
 *
 * @param filePath - Path to a `.onnx`, `.npy` or `.json` file.
 * @param overrides - `--kind`, `--bounds`, `--level` from the command line; each wins over the file.
 *   For grids they replace the sidecar's values; for recipes `kind` must match the recipe.
 * @param options - See {@link OpenFieldOptions}.
 * @returns The field; call `dispose()` when done (it releases the ONNX session).
 * @throws FieldkilnError naming the file for a missing, empty, unreadable or non-regular file, an
 *   unknown extension (the message lists the supported ones), content that does not fit the
 *   extension (e.g. `x.onnx: not a valid ONNX model (<runtime's reason>)`), a missing sidecar, and
 *   everything core's sources reject.
 *
 * @example
 * ```ts
 * const field = await openField('models/ball.onnx', { level: 0.01 });
 * const values = await field.evaluate(new Float32Array([0, 0, 0]));
 * await field.dispose?.();
 * ```
 */
export async function openField(filePath: string, overrides: FieldOverrides = {}, options: OpenFieldOptions = {}): Promise<Field> {
  const name = path.basename(filePath);
  await checkRegularFile(filePath, name);
  const ext = path.extname(filePath).toLowerCase();
  if (!(ext in FIELD_EXTENSIONS)) {
    const list = Object.entries(FIELD_EXTENSIONS)
      .map(([e, what]) => `${e} (${what})`)
      .join(', ');
    throw new FieldkilnError(`${name}: unknown file type '${ext || '(no extension)'}'; Fieldkiln reads ${list}`);
  }
  const bytes = await readBytes(filePath, name);
  if (ext === '.onnx') return openOnnx(bytes, name, overrides, options);
  if (ext === '.npy') return openGrid(bytes, filePath, name, overrides, options);
  return openRecipe(bytes, name, overrides, options);
}

async function openOnnx(bytes: Uint8Array, name: string, overrides: FieldOverrides, options: OpenFieldOptions): Promise<Field> {
  let session: ort.InferenceSession;
  try {
    session = await ort.InferenceSession.create(bytes, {
      ...ONNX_SESSION_OPTIONS,
      ...(options.intraOpNumThreads ? { intraOpNumThreads: options.intraOpNumThreads } : {}),
    });
  } catch (e) {
    const reason = errorText(e);
    let hint = '';
    if (looksLikeText(bytes)) {
      hint = '; the file starts with plain text, not a binary ONNX model';
    } else {
      try {
        readOnnxModelInfo(bytes);
      } catch (e2) {
        if (e2 instanceof OnnxFormatError) hint = `; ${e2.detail}`;
      }
    }
    throw new FieldkilnError(`${name}: not a valid ONNX model (onnxruntime: ${reason}${hint})`);
  }
  try {
    const info = readOnnxModelInfo(bytes, name);
    const inputs = session.inputMetadata.map(valueInfo);
    const outputs = session.outputMetadata.map(valueInfo);
    const inputName = session.inputNames[0];
    const run = async (points: Float32Array, count: number): Promise<Record<string, Float32Array>> => {
      let result: ort.InferenceSession.ReturnType;
      try {
        result = await session.run({ [inputName]: new ort.Tensor('float32', points, [count, 3]) });
      } catch (e) {
        throw new FieldkilnError(`${name}: inference failed (onnxruntime: ${errorText(e)})`);
      }
      const out: Record<string, Float32Array> = {};
      for (const [key, value] of Object.entries(result)) {
        if (value instanceof ort.Tensor && value.data instanceof Float32Array) out[key] = value.data;
      }
      return out;
    };
    const field = createNeuralField({
      name,
      run,
      inputs,
      outputs,
      metadata: info.metadata,
      overrides,
      batchSize: options.batchSize,
      details: {
        opset: info.opsets[''] ?? info.opsets['ai.onnx'],
        opsets: info.opsets,
        irVersion: info.irVersion,
        producer: info.producer,
      },
    });
    field.dispose = () => session.release();
    return field;
  } catch (e) {
    await session.release().catch(() => undefined);
    throw e;
  }
}

async function openGrid(bytes: Uint8Array, filePath: string, name: string, overrides: FieldOverrides, options: OpenFieldOptions): Promise<Field> {
  const dir = path.dirname(filePath);
  const sidecarPath = path.join(dir, `${path.basename(filePath, path.extname(filePath))}.json`);
  const sidecarName = path.basename(sidecarPath);
  if (!(await exists(sidecarPath))) {
    throw new FieldkilnError(
      `${name}: its sidecar is missing; expected ${sidecarPath} (JSON with "kind" and "bounds"; a .npy grid needs it)`,
    );
  }
  await checkRegularFile(sidecarPath, sidecarName);
  const sidecar = parseJson(await readBytes(sidecarPath, sidecarName), sidecarName);

  const grid = parseNpy(bytes, name);
  if (grid.shape.length !== 3) {
    throw new FieldkilnError(`${name}: expected a 3-D array of shape [nz, ny, nx]; the file holds shape (${grid.shape.join(', ')})`);
  }
  const shape = grid.shape as [number, number, number];

  let colors: Float32Array | undefined;
  const colorFile = isObject(sidecar) ? sidecar.color_file : undefined;
  if (colorFile !== undefined) {
    if (typeof colorFile !== 'string' || colorFile === '') {
      throw new FieldkilnError(`${sidecarName}: "color_file" must be the name of a .npy file (got ${JSON.stringify(colorFile)})`);
    }
    const colorPath = path.resolve(dir, colorFile);
    const colorName = path.basename(colorPath);
    await checkRegularFile(colorPath, colorName, `named by "color_file" in ${sidecarName}`);
    const rgb = parseNpy(await readBytes(colorPath, colorName), colorName);
    const want = [...shape, 3];
    if (rgb.shape.length !== 4 || rgb.shape.some((n, i) => n !== want[i])) {
      throw new FieldkilnError(
        `${colorName}: expected shape (${want.join(', ')}) ([nz, ny, nx, 3] linear RGB) to match ${name}; the file holds (${rgb.shape.join(', ')})`,
      );
    }
    colors = rgb.data;
  }

  checkOverrides(overrides, name);
  const merged = isObject(sidecar) ? { ...sidecar } : sidecar;
  if (isObject(merged)) {
    if (overrides.kind !== undefined) merged.kind = overrides.kind;
    if (overrides.bounds !== undefined) merged.bounds = overrides.bounds;
    if (overrides.level !== undefined) merged.level = overrides.level;
  }
  // The samples move into shared memory once, so every worker reads the same copy.
  const share = (a: Float32Array) => {
    const sab = new SharedArrayBuffer(a.byteLength);
    new Float32Array(sab).set(a);
    return sab;
  };
  const values = share(grid.data);
  const colorBuf = colors ? share(colors) : undefined;
  const field = createGridField({ values: new Float32Array(values), shape, sidecar: merged, name, colors: colorBuf ? new Float32Array(colorBuf) : undefined });
  return poolField(field, { source: 'grid', values, shape, sidecar: merged, name, colors: colorBuf }, options.workers);
}

function openRecipe(bytes: Uint8Array, name: string, overrides: FieldOverrides, options: OpenFieldOptions): Field {
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw new FieldkilnError(`${name}: not a recipe: the file is not UTF-8 text`);
  }
  try {
    const peek: unknown = JSON.parse(text);
    if (isObject(peek) && typeof peek.file === 'string' && peek.file.toLowerCase().endsWith('.npy')) {
      throw new FieldkilnError(`${name}: this is the sidecar of the grid ${peek.file}; open ${peek.file} instead`);
    }
  } catch (e) {
    if (e instanceof FieldkilnError) throw e;
    // Not JSON: the recipe reader reports it with its own message.
  }
  checkOverrides(overrides, name);
  let field: Field;
  try {
    field = poolField(createRecipeField(text, name), { source: 'recipe', text, name }, options.workers);
  } catch (e) {
    // The recipe reader's messages start with `recipe:`; put the file name first like every other source.
    if (e instanceof FieldkilnError && !e.message.startsWith(`${name}:`)) throw new FieldkilnError(`${name}: ${e.message}`);
    throw e;
  }
  return withOverrides(field, overrides, name);
}

/** A field whose bounds and level are replaced by the user's; `kind` must match. */
function withOverrides(field: Field, overrides: FieldOverrides, name: string): Field {
  if (overrides.kind !== undefined && overrides.kind !== field.kind) {
    throw new FieldkilnError(`${name}: --kind ${overrides.kind} disagrees with the file, whose field kind is ${field.kind}`);
  }
  if (overrides.bounds === undefined && overrides.level === undefined) return field;
  return {
    kind: field.kind,
    bounds: overrides.bounds ? (overrides.bounds.slice() as Bounds) : field.bounds,
    defaultLevel: overrides.level ?? field.defaultLevel,
    hasColor: field.hasColor,
    lipschitz: field.lipschitz,
    costly: field.costly,
    description: field.description,
    evaluate: (points, signal) => field.evaluate(points, signal),
    evaluateColor: field.evaluateColor ? (points, signal) => field.evaluateColor!(points, signal) : undefined,
    dispose: field.dispose ? () => field.dispose!() : undefined,
  };
}

function checkOverrides(overrides: FieldOverrides, name: string): void {
  if (overrides.bounds !== undefined) {
    const bp = boundsProblem(overrides.bounds);
    if (bp !== null) throw new FieldkilnError(`${name}: --bounds: ${bp}`);
  }
  if (overrides.level !== undefined && !Number.isFinite(overrides.level)) {
    throw new FieldkilnError(`${name}: --level must be a finite number (got ${overrides.level})`);
  }
}

function valueInfo(m: ort.InferenceSession.ValueMetadata): NeuralValueInfo {
  return m.isTensor ? { name: m.name, type: m.type, shape: [...m.shape] } : { name: m.name, type: 'non-tensor', shape: [] };
}

/** Rejects missing paths, directories and anything that is not a plain file (reading a FIFO would hang). */
async function checkRegularFile(filePath: string, name: string, context = ''): Promise<void> {
  const where = context ? ` (${context})` : '';
  let s;
  try {
    s = await stat(filePath);
  } catch (e) {
    throw new FieldkilnError(`${name}: ${fsProblem(e, filePath)}${where}`);
  }
  if (s.isDirectory()) throw new FieldkilnError(`${name}: is a directory, not a field file (${filePath})${where}`);
  if (!s.isFile()) throw new FieldkilnError(`${name}: is not a regular file (${filePath})${where}`);
}

async function readBytes(filePath: string, name: string): Promise<Uint8Array> {
  let buf: Buffer;
  try {
    buf = await readFile(filePath);
  } catch (e) {
    throw new FieldkilnError(`${name}: ${fsProblem(e, filePath)}`);
  }
  if (buf.length === 0) throw new FieldkilnError(`${name}: the file is empty (0 bytes)`);
  return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
}

function fsProblem(e: unknown, filePath: string): string {
  const code = (e as NodeJS.ErrnoException)?.code;
  if (code === 'ENOENT') return `file not found (${filePath})`;
  if (code === 'EACCES' || code === 'EPERM') return `cannot read the file: permission denied (${filePath})`;
  if (code === 'EISDIR') return `is a directory, not a field file (${filePath})`;
  return `cannot read the file (${errorText(e)})`;
}

async function exists(filePath: string): Promise<boolean> {
  try {
    await stat(filePath);
    return true;
  } catch (e) {
    if ((e as NodeJS.ErrnoException)?.code === 'ENOENT') return false;
    return true; // let the read report other problems
  }
}

function parseJson(bytes: Uint8Array, name: string): unknown {
  try {
    return JSON.parse(new TextDecoder('utf-8').decode(bytes));
  } catch (e) {
    throw new FieldkilnError(`${name}: not valid JSON (${errorText(e)})`);
  }
}

/** True when the first bytes are all printable ASCII or whitespace (an ONNX file starts with binary tags). */
function looksLikeText(bytes: Uint8Array): boolean {
  const n = Math.min(bytes.length, 64);
  for (let i = 0; i < n; i++) {
    const b = bytes[i];
    if (!(b === 9 || b === 10 || b === 13 || (b >= 32 && b < 127))) return false;
  }
  return n > 0;
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function errorText(e: unknown): string {
  const msg = e instanceof Error ? e.message : String(e);
  return msg.replace(/\s+/g, ' ').trim();
}
