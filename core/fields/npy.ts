/**
 * Reader for NumPy `.npy` files holding floating-point arrays.
 *
 * Format: NumPy Enhancement Proposal 1, "A Simple File Format for NumPy Arrays" (NEP 1), and the
 * `numpy.lib.format` module docs. Layout:
 *
 * ```
 * bytes 0..5   magic  \x93 N U M P Y
 * byte  6      major version (1, 2 or 3)      byte 7  minor version
 * v1:   bytes 8..9   header length, uint16 LE; header starts at 10
 * v2/3: bytes 8..11  header length, uint32 LE; header starts at 12 (v3 headers are UTF-8)
 * header: a Python dict literal {'descr': '<f4', 'fortran_order': False, 'shape': (64, 64), }
 *         padded with spaces and ending in '\n'
 * data:   raw little-endian values, C order, exactly prod(shape) * itemsize bytes
 * ```
 *
 * Only float32 and float64 (converted to float32) are read, in C order: that is what a dense
 * field grid needs. Everything else is refused with a message that names the problem.
 */
import { FieldkilnError } from '../types.js';

/** What {@link parseNpy} returns. */
export interface NpyArray {
  /** Array shape, outermost axis first (C order), e.g. `[nz, ny, nx]`. `[]` for a 0-d array. */
  shape: number[];
  /** The values in C order (last axis fastest), `prod(shape)` floats. float64 input is rounded to float32. */
  data: Float32Array;
  /** The dtype as the file spells it, e.g. `'<f4'` or `'<f8'`. */
  dtype: string;
}

/** The dtypes {@link parseNpy} reads, as NumPy writes them. `|` and `=` prefixes are read as little-endian too. */
export const NPY_SUPPORTED_DTYPES: readonly string[] = ['<f4', '<f8'];

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]; // \x93NUMPY

const HOST_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/**
 * Parses a `.npy` file (format version 1, 2 or 3) holding a float32 or float64 array in C order.
 *
 * @param bytes - The whole file.
 * @param name - File name used at the start of every error message.
 * @returns Shape, values as a new Float32Array (float64 is converted), and the dtype string.
 * @throws FieldkilnError (message starts with `name`) for a bad magic string, a truncated or
 *   garbled header, a header without `descr`/`fortran_order`/`shape`, an unsupported or big-endian
 *   dtype, Fortran order, or a data section longer or shorter than the shape implies.
 *
 * @example
 * ```ts
 * const { shape, data } = parseNpy(bytes, 'grid.npy'); // shape [nz, ny, nx], data.length = nz*ny*nx
 * ```
 */
export function parseNpy(bytes: Uint8Array, name: string): NpyArray {
  const fail = (msg: string): never => {
    throw new FieldkilnError(`${name}: ${msg}`);
  };

  if (bytes.length < MAGIC.length || MAGIC.some((b, i) => bytes[i] !== b)) {
    fail('not a NumPy .npy file (it does not start with the magic bytes \\x93NUMPY)');
  }
  if (bytes.length < 10) fail(`truncated .npy header (the file has only ${bytes.length} bytes)`);

  const major = bytes[6];
  const minor = bytes[7];
  let headerStart: number;
  let headerLen: number;
  if (major === 1) {
    headerStart = 10;
    headerLen = bytes[8] | (bytes[9] << 8);
  } else if (major === 2 || major === 3) {
    if (bytes.length < 12) fail(`truncated .npy header (the file has only ${bytes.length} bytes)`);
    headerStart = 12;
    headerLen = (bytes[8] | (bytes[9] << 8) | (bytes[10] << 16)) + bytes[11] * 0x1000000;
  } else {
    return fail(`unsupported .npy format version ${major}.${minor} (Fieldkiln reads versions 1.0, 2.0 and 3.0)`);
  }
  const dataStart = headerStart + headerLen;
  if (dataStart > bytes.length) {
    fail(`truncated .npy header: it claims ${headerLen} bytes but the file ends after ${bytes.length - headerStart}`);
  }

  const headerBytes = bytes.subarray(headerStart, dataStart);
  let header: string;
  if (major === 3) {
    try {
      header = new TextDecoder('utf-8', { fatal: true }).decode(headerBytes);
    } catch {
      return fail('garbled .npy header: it is not valid UTF-8');
    }
  } else {
    header = '';
    for (let i = 0; i < headerBytes.length; i++) header += String.fromCharCode(headerBytes[i]);
  }

  const dict = header.trim();
  if (!dict.startsWith('{') || !dict.endsWith('}')) {
    fail(`garbled .npy header: expected a Python dict like {'descr': '<f4', ...}, got ${quote(dict)}`);
  }
  const descrM = /['"]descr['"]\s*:\s*['"]([^'"]*)['"]/.exec(dict);
  const fortranM = /['"]fortran_order['"]\s*:\s*(True|False)\b/.exec(dict);
  const shapeM = /['"]shape['"]\s*:\s*\(([^()]*)\)/.exec(dict);
  if (!descrM && /['"]descr['"]\s*:\s*\[/.test(dict)) {
    fail(`unsupported dtype: structured (record) arrays are not read (supported: ${NPY_SUPPORTED_DTYPES.join(', ')})`);
  }
  const missing: string[] = [];
  if (!descrM) missing.push("'descr'");
  if (!fortranM) missing.push("'fortran_order'");
  if (!shapeM) missing.push("'shape'");
  if (missing.length > 0) fail(`.npy header lacks ${missing.join(', ')} (header: ${quote(dict)})`);

  const shape: number[] = [];
  for (const part of shapeM![1].split(',')) {
    const t = part.trim().replace(/L$/, ''); // Python 2 wrote long ints as 64L
    if (t === '') continue;
    if (!/^\d+$/.test(t)) fail(`garbled .npy header: shape entry ${quote(t)} is not a non-negative integer`);
    shape.push(Number(t));
  }

  const descr = descrM![1];
  const order = descr.charAt(0);
  const code = '<>|=!'.includes(order) ? descr.slice(1) : descr;
  const supported = `supported: ${NPY_SUPPORTED_DTYPES.join(', ')}`;
  if (code !== 'f4' && code !== 'f8') {
    fail(`unsupported dtype ${quote(descr)} (${supported}; convert with array.astype('<f4'))`);
  }
  if (order === '>' || order === '!') {
    fail(`big-endian dtype ${quote(descr)} is not supported (${supported}; convert with array.astype('<${code}'))`);
  }
  if (fortranM![1] === 'True' && shape.filter((n) => n > 1).length > 1) {
    fail("Fortran-order arrays are not supported (fortran_order is True); save a C-order copy with numpy.ascontiguousarray(array)");
  }

  const itemSize = code === 'f4' ? 4 : 8;
  const count = shape.reduce((a, b) => a * b, 1);
  const expectedBytes = count * itemSize;
  const actualBytes = bytes.length - dataStart;
  if (actualBytes !== expectedBytes) {
    const relation = actualBytes < expectedBytes ? 'shorter' : 'longer';
    fail(
      `data is ${relation} than the shape implies: shape (${shape.join(', ')}) of ${descr} needs ${expectedBytes} bytes, ` +
        `the file has ${actualBytes} after the header`,
    );
  }

  // Copy into a fresh, aligned buffer (the data offset need not be a multiple of the item size).
  const raw = bytes.slice(dataStart, dataStart + expectedBytes);
  let data: Float32Array;
  if (HOST_LITTLE_ENDIAN) {
    data = itemSize === 4 ? new Float32Array(raw.buffer, 0, count) : Float32Array.from(new Float64Array(raw.buffer, 0, count));
  } else {
    const view = new DataView(raw.buffer);
    data = new Float32Array(count);
    for (let i = 0; i < count; i++) data[i] = itemSize === 4 ? view.getFloat32(i * 4, true) : view.getFloat64(i * 8, true);
  }
  return { shape, data, dtype: descr };
}

function quote(s: string): string {
  const short = s.length > 120 ? `${s.slice(0, 117)}...` : s;
  return `'${short}'`;
}
