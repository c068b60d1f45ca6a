/**
 * Reads PLY (Turk 1994), ASCII or binary (either byte order): the `vertex` element's x, y, z (and
 * red, green, blue as sRGB bytes, converted to linear), and the `face` element's index list
 * (`vertex_indices` or `vertex_index`), polygons split into fans. Other elements and properties
 * are skipped by their declared types.
 */
import type { MeshData } from '../types.js';
import { FieldkilnError } from '../types.js';
import { srgbToLinear } from '../color/srgb.js';

const TYPES: Record<string, [number, string]> = {
  char: [1, 'Int8'], int8: [1, 'Int8'], uchar: [1, 'Uint8'], uint8: [1, 'Uint8'],
  short: [2, 'Int16'], int16: [2, 'Int16'], ushort: [2, 'Uint16'], uint16: [2, 'Uint16'],
  int: [4, 'Int32'], int32: [4, 'Int32'], uint: [4, 'Uint32'], uint32: [4, 'Uint32'],
  float: [4, 'Float32'], float32: [4, 'Float32'], double: [8, 'Float64'], float64: [8, 'Float64'],
};

interface Property {
  name: string;
  type: string;
  /** For list properties: the count's type. */
  countType?: string;
}
interface Element {
  name: string;
  count: number;
  props: Property[];
}

/**
 * The mesh in PLY `bytes`.
 * @throws FieldkilnError naming what is wrong with the header or the data.
 */
export function readPly(bytes: Uint8Array): MeshData {
  const head = new TextDecoder('latin1').decode(bytes.subarray(0, Math.min(bytes.length, 65536)));
  if (!head.startsWith('ply')) throw new FieldkilnError(`PLY: the file does not start with 'ply'`);
  const endMatch = /end_header\r?\n/.exec(head);
  if (!endMatch) throw new FieldkilnError(`PLY: no 'end_header' line in the first 64 KiB`);
  const dataStart = endMatch.index + endMatch[0].length;
  let format = '';
  const elements: Element[] = [];
  for (const raw of head.slice(0, endMatch.index).split(/\r?\n/)) {
    const w = raw.trim().split(/\s+/);
    if (w[0] === 'format') format = w[1];
    else if (w[0] === 'element') elements.push({ name: w[1], count: Number(w[2]), props: [] });
    else if (w[0] === 'property') {
      const el = elements[elements.length - 1];
      if (!el) throw new FieldkilnError(`PLY: property '${raw.trim()}' comes before any element`);
      const p: Property = w[1] === 'list' ? { name: w[4], type: w[3], countType: w[2] } : { name: w[2], type: w[1] };
      for (const t of [p.type, p.countType]) if (t !== undefined && !TYPES[t]) throw new FieldkilnError(`PLY: unknown property type '${t}' in '${raw.trim()}'`);
      el.props.push(p);
    }
  }
  if (!['ascii', 'binary_little_endian', 'binary_big_endian'].includes(format)) throw new FieldkilnError(`PLY: unknown format '${format}'`);
  for (const el of elements) if (!Number.isInteger(el.count) || el.count < 0) throw new FieldkilnError(`PLY: element '${el.name}' has a bad count`);

  // A reader of the next value of a given type, ASCII or binary.
  let next: (type: string) => number;
  if (format === 'ascii') {
    const tokens = new TextDecoder().decode(bytes.subarray(dataStart)).split(/\s+/).filter((s) => s.length > 0);
    let i = 0;
    next = () => {
      if (i >= tokens.length) throw new FieldkilnError('PLY: the data ends before every element was read');
      const v = Number(tokens[i++]);
      if (!Number.isFinite(v)) throw new FieldkilnError(`PLY: '${tokens[i - 1]}' is not a number`);
      return v;
    };
  } else {
    const le = format === 'binary_little_endian';
    const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    let o = dataStart;
    next = (type) => {
      const [size, name] = TYPES[type];
      if (o + size > bytes.length) throw new FieldkilnError('PLY: the data ends before every element was read');
      const v = (dv as unknown as Record<string, (o: number, le: boolean) => number>)[`get${name}`].call(dv, o, le);
      o += size;
      return v;
    };
  }

  let positions: Float32Array | undefined;
  let colors: Float32Array | undefined;
  const tri: number[] = [];
  let vertexCount = 0;
  for (const el of elements) {
    const isVertex = el.name === 'vertex';
    const isFace = el.name === 'face';
    const pi = ['x', 'y', 'z'].map((n) => el.props.findIndex((p) => p.name === n && !p.countType));
    const ci = ['red', 'green', 'blue'].map((n) => el.props.findIndex((p) => p.name === n && !p.countType));
    const li = el.props.findIndex((p) => (p.name === 'vertex_indices' || p.name === 'vertex_index') && p.countType);
    if (isVertex) {
      if (pi.some((i) => i < 0)) throw new FieldkilnError(`PLY: the vertex element has no x, y, z properties`);
      vertexCount = el.count;
      positions = new Float32Array(3 * el.count);
      if (ci.every((i) => i >= 0)) colors = new Float32Array(3 * el.count);
    }
    if (isFace && li < 0) throw new FieldkilnError(`PLY: the face element has no vertex_indices list`);
    const row = new Array<number>(el.props.length);
    let list: number[] = [];
    for (let r = 0; r < el.count; r++) {
      for (let q = 0; q < el.props.length; q++) {
        const p = el.props[q];
        if (p.countType) {
          const n = next(p.countType);
          const vals: number[] = [];
          for (let k = 0; k < n; k++) vals.push(next(p.type));
          if (q === li) list = vals;
        } else row[q] = next(p.type);
      }
      if (isVertex) {
        for (let a = 0; a < 3; a++) positions![3 * r + a] = row[pi[a]];
        if (colors) for (let a = 0; a < 3; a++) colors[3 * r + a] = srgbToLinear(row[ci[a]] / (el.props[ci[a]].type.includes('float') || el.props[ci[a]].type === 'double' ? 1 : 255));
      } else if (isFace) {
        if (list.length < 3) throw new FieldkilnError(`PLY: face ${r} has fewer than three corners`);
        for (const v of list) if (!Number.isInteger(v) || v < 0 || v >= vertexCount) throw new FieldkilnError(`PLY: face ${r} names vertex ${v}, which does not exist (${vertexCount} vertices)`);
        for (let k = 1; k + 1 < list.length; k++) tri.push(list[0], list[k], list[k + 1]);
      }
    }
  }
  if (!positions) throw new FieldkilnError('PLY: no vertex element');
  const mesh: MeshData = { positions, indices: Uint32Array.from(tri) };
  if (colors) mesh.colors = colors;
  return mesh;
}
