/**
 * Writes tiny ONNX models by hand-encoding protobuf, so tests can build models with exactly the
 * flaw they need (wrong input, wrong output name, wrong shape, missing metadata) without torch.
 *
 * Sources: Protocol Buffers encoding (protobuf.dev/programming-guides/encoding) and onnx/onnx.proto:
 * ModelProto { 1 ir_version, 2 producer_name, 7 graph, 8 opset_import, 14 metadata_props },
 * OperatorSetIdProto { 1 domain, 2 version }, StringStringEntryProto { 1 key, 2 value },
 * GraphProto { 1 node, 2 name, 11 input, 12 output }, NodeProto { 1 input, 2 output, 3 name,
 * 4 op_type, 5 attribute }, AttributeProto { 1 name, 3 i, 8 ints, 20 type (INT = 2, INTS = 7) },
 * ValueInfoProto { 1 name, 2 type }, TypeProto { 1 tensor_type }, TypeProto.Tensor { 1 elem_type
 * (FLOAT = 1), 2 shape }, TensorShapeProto { 1 dim }, Dimension { 1 dim_value, 2 dim_param }.
 */

/** A graph input or output. `shape: null` writes the type without any shape. */
export interface OnnxValueSpec {
  name: string;
  /** TensorProto.DataType; 1 = FLOAT (default). */
  elemType?: number;
  /** Numbers are fixed dimensions, strings symbolic ones. */
  shape: (number | string)[] | null;
}

/** One graph node. */
export interface OnnxNodeSpec {
  op: string;
  inputs: string[];
  outputs: string[];
  /** Integer-list attributes (e.g. `axes`) and integer attributes (e.g. `keepdims`). */
  ints?: Record<string, number[]>;
  int?: Record<string, number>;
}

/** A whole model. */
export interface OnnxModelSpec {
  inputs: OnnxValueSpec[];
  outputs: OnnxValueSpec[];
  nodes: OnnxNodeSpec[];
  /** Default-domain opset. Default 11. */
  opset?: number;
  /** Default 7 (ONNX 1.8+, fine for opset 11–13). */
  irVersion?: number;
  metadata?: Record<string, string>;
}

const enc = new TextEncoder();

function varint(n: number): number[] {
  if (!Number.isInteger(n) || n < 0) throw new Error(`varint: ${n} is not a non-negative integer`);
  const out: number[] = [];
  while (n >= 0x80) {
    out.push((n % 0x80) | 0x80);
    n = Math.floor(n / 0x80);
  }
  out.push(n);
  return out;
}

function tag(field: number, wire: number): number[] {
  return varint(field * 8 + wire);
}

function fInt(field: number, n: number): number[] {
  return [...tag(field, 0), ...varint(n)];
}

function fBytes(field: number, bytes: ArrayLike<number>): number[] {
  return [...tag(field, 2), ...varint(bytes.length), ...Array.from(bytes)];
}

function fString(field: number, s: string): number[] {
  return fBytes(field, enc.encode(s));
}

function valueInfo(v: OnnxValueSpec): number[] {
  const tensor: number[] = fInt(1, v.elemType ?? 1);
  if (v.shape !== null) {
    const dims: number[] = [];
    for (const d of v.shape) dims.push(...fBytes(1, typeof d === 'number' ? fInt(1, d) : fString(2, d)));
    tensor.push(...fBytes(2, dims));
  }
  return [...fString(1, v.name), ...fBytes(2, fBytes(1, tensor))];
}

function node(n: OnnxNodeSpec, index: number): number[] {
  const out: number[] = [];
  for (const i of n.inputs) out.push(...fString(1, i));
  for (const o of n.outputs) out.push(...fString(2, o));
  out.push(...fString(3, `${n.op}_${index}`), ...fString(4, n.op));
  for (const [name, ints] of Object.entries(n.ints ?? {})) {
    const attr = [...fString(1, name), ...ints.flatMap((v) => fInt(8, v)), ...fInt(20, 7)];
    out.push(...fBytes(5, attr));
  }
  for (const [name, v] of Object.entries(n.int ?? {})) {
    out.push(...fBytes(5, [...fString(1, name), ...fInt(3, v), ...fInt(20, 2)]));
  }
  return out;
}

/** Encodes a ModelProto. Non-negative integer attributes only (enough for axes and keepdims). */
export function writeOnnxModel(spec: OnnxModelSpec): Uint8Array {
  const graph: number[] = [];
  spec.nodes.forEach((n, i) => graph.push(...fBytes(1, node(n, i))));
  graph.push(...fString(2, 'test_graph'));
  for (const v of spec.inputs) graph.push(...fBytes(11, valueInfo(v)));
  for (const v of spec.outputs) graph.push(...fBytes(12, valueInfo(v)));

  const model: number[] = [...fInt(1, spec.irVersion ?? 7), ...fString(2, 'fieldkiln-test')];
  model.push(...fBytes(7, graph));
  model.push(...fBytes(8, [...fString(1, ''), ...fInt(2, spec.opset ?? 11)]));
  for (const [k, v] of Object.entries(spec.metadata ?? {})) model.push(...fBytes(14, [...fString(1, k), ...fString(2, v)]));
  return new Uint8Array(model);
}

/**
 * A model computing `out = x + y + z` per point (ReduceSum over axis 1, keepdims, opset 11):
 * input `inputName` float32 `[N, width]`, output `outputName` float32 `[N, 1]`.
 */
export function writeSumModel(opts: {
  inputName?: string;
  width?: number;
  outputName?: string;
  metadata?: Record<string, string>;
}): Uint8Array {
  const inputName = opts.inputName ?? 'points';
  const outputName = opts.outputName ?? 'sdf';
  return writeOnnxModel({
    inputs: [{ name: inputName, shape: ['N', opts.width ?? 3] }],
    outputs: [{ name: outputName, shape: ['N', 1] }],
    nodes: [{ op: 'ReduceSum', inputs: [inputName], outputs: [outputName], ints: { axes: [1] }, int: { keepdims: 1 } }],
    metadata: opts.metadata,
  });
}
