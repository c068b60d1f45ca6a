/**
 * Reads the top-level facts of an ONNX model straight from its protobuf bytes: `metadata_props`,
 * the opset imports, the IR version and the producer. onnxruntime's JS API exposes input and output
 * names, types and shapes but not `metadata_props`, so Fieldkiln reads them here by hand.
 *
 * Sources:
 * - Protocol Buffers encoding (protobuf.dev/programming-guides/encoding): a message is a sequence of
 *   (tag varint = field_number << 3 | wire_type, payload); wire types 0 varint, 1 fixed 8 bytes,
 *   2 length-delimited, 5 fixed 4 bytes; 3 and 4 are the deprecated groups.
 * - onnx/onnx.proto (ONNX IR spec): ModelProto field 1 `ir_version` (int64), 2 `producer_name`,
 *   3 `producer_version`, 7 `graph`, 8 `opset_import` (OperatorSetIdProto: 1 `domain`, 2 `version`),
 *   14 `metadata_props` (StringStringEntryProto: 1 `key`, 2 `value`).
 *
 * Only the top level is walked; the graph (usually nearly all the bytes) is skipped by its length.
 */
import { FieldkilnError } from '../types.js';

/** What {@link readOnnxModelInfo} returns. */
export interface OnnxModelInfo {
  /** `metadata_props` as key → value. Later duplicates win. */
  metadata: Record<string, string>;
  /** Opset version per operator-set domain; the default domain is `''` (shown by ONNX as `ai.onnx`). */
  opsets: Record<string, number>;
  /** `ir_version`, when present. */
  irVersion?: number;
  /** `producer_name` and `producer_version` joined by a space, when present. */
  producer?: string;
}

/** Thrown when the bytes are not a well-formed ONNX ModelProto; `detail` says what is wrong, without a file name. */
export class OnnxFormatError extends FieldkilnError {
  constructor(
    message: string,
    /** What is wrong, e.g. `the data ends early, so the file looks truncated (field 7 at byte 21 claims ...)`. */
    readonly detail: string,
  ) {
    super(message);
  }
}

/**
 * Reads ModelProto's `metadata_props` (field 14) from an ONNX file.
 *
 * @param bytes - The whole `.onnx` file.
 * @param name - Optional file name to start error messages with.
 * @returns key → value, e.g. `{ 'field.kind': 'sdf', 'field.bounds': '-1,-1,-1,1,1,1' }`.
 * @throws OnnxFormatError (a FieldkilnError) `... is not an ONNX model ...` when the protobuf is malformed (a varint or a
 *   length runs past the end, an impossible wire type or field number) or holds no graph.
 *
 * @example
 * ```ts
 * const meta = readOnnxMetadata(bytes, 'ball.onnx'); // meta['field.bounds'] === '-0.75,-0.75,-0.75,0.75,0.75,0.75'
 * ```
 */
export function readOnnxMetadata(bytes: Uint8Array, name?: string): Record<string, string> {
  return readOnnxModelInfo(bytes, name).metadata;
}

/**
 * Reads ModelProto's metadata, opset imports, IR version and producer (see {@link OnnxModelInfo}).
 * Same errors as {@link readOnnxMetadata}.
 */
export function readOnnxModelInfo(bytes: Uint8Array, name?: string): OnnxModelInfo {
  const label = name ? `${name} is` : 'the data is';
  const info: OnnxModelInfo = { metadata: {}, opsets: {} };
  let producerName: string | undefined;
  let producerVersion: string | undefined;
  let hasGraph = false;
  try {
    walkMessage(bytes, 0, bytes.length, (field, wire, start, end, varint) => {
      if (field === 1 && wire === 0) info.irVersion = varint;
      else if (field === 2 && wire === 2) producerName = utf8(bytes, start, end);
      else if (field === 3 && wire === 2) producerVersion = utf8(bytes, start, end);
      else if (field === 7 && wire === 2) hasGraph = true;
      else if (field === 8 && wire === 2) {
        let domain = '';
        let version = 0;
        walkMessage(bytes, start, end, (f, w, s, e, v) => {
          if (f === 1 && w === 2) domain = utf8(bytes, s, e);
          else if (f === 2 && w === 0) version = v;
        });
        info.opsets[domain] = version;
      } else if (field === 14 && wire === 2) {
        let key = '';
        let value = '';
        walkMessage(bytes, start, end, (f, w, s, e) => {
          if (f === 1 && w === 2) key = utf8(bytes, s, e);
          else if (f === 2 && w === 2) value = utf8(bytes, s, e);
        });
        info.metadata[key] = value;
      }
    });
  } catch (e) {
    if (e instanceof ProtobufError) {
      const detail = e.truncated ? `the data ends early, so the file looks truncated (${e.message})` : `the bytes are not a protobuf message (${e.message})`;
      throw new OnnxFormatError(`${label} not an ONNX model: ${detail}`, detail);
    }
    throw e;
  }
  if (!hasGraph) {
    const detail = bytes.length === 0 ? 'it is empty' : 'it holds no graph (ModelProto field 7)';
    throw new OnnxFormatError(`${label} not an ONNX model: ${detail}`, detail);
  }
  if (producerName !== undefined || producerVersion !== undefined) {
    info.producer = [producerName, producerVersion].filter((s) => s).join(' ');
  }
  return info;
}

class ProtobufError extends Error {
  constructor(
    message: string,
    /** True when a varint or a length runs past the end (a cut-short file), false for impossible bytes. */
    readonly truncated: boolean,
  ) {
    super(message);
  }
}

/**
 * Calls `visit` for each field of the message in `bytes[start, end)`. For wire type 2, `[s, e)` is the
 * payload; for wire type 0, `varint` is the value (exact up to 2^53). Throws ProtobufError on bad input.
 */
function walkMessage(
  bytes: Uint8Array,
  start: number,
  end: number,
  visit: (field: number, wire: number, s: number, e: number, varint: number) => void,
): void {
  let pos = start;
  const readVarint = (): number => {
    const at = pos;
    let value = 0;
    let scale = 1;
    for (let i = 0; i < 10; i++) {
      if (pos >= end) throw new ProtobufError(`a varint at byte ${at} runs past the end at byte ${end}`, true);
      const b = bytes[pos++];
      value += (b & 0x7f) * scale;
      if ((b & 0x80) === 0) return value;
      scale *= 128;
    }
    throw new ProtobufError(`a varint at byte ${at} is longer than 10 bytes`, false);
  };
  while (pos < end) {
    const tagAt = pos;
    const tag = readVarint();
    const wire = tag % 8;
    const field = Math.floor(tag / 8);
    if (field === 0) throw new ProtobufError(`field number 0 at byte ${tagAt}`, false);
    switch (wire) {
      case 0: {
        const v = readVarint();
        visit(field, wire, 0, 0, v);
        break;
      }
      case 1:
      case 5: {
        const size = wire === 1 ? 8 : 4;
        if (pos + size > end) throw new ProtobufError(`a ${size}-byte value at byte ${pos} runs past the end at byte ${end}`, true);
        visit(field, wire, pos, pos + size, 0);
        pos += size;
        break;
      }
      case 2: {
        const len = readVarint();
        if (pos + len > end) {
          throw new ProtobufError(`field ${field} at byte ${tagAt} claims ${len} bytes but only ${end - pos} remain`, true);
        }
        visit(field, wire, pos, pos + len, 0);
        pos += len;
        break;
      }
      default:
        throw new ProtobufError(`field ${field} at byte ${tagAt} has wire type ${wire}, which ONNX never writes`, false);
    }
  }
}

const decoder = new TextDecoder('utf-8');

function utf8(bytes: Uint8Array, start: number, end: number): string {
  return decoder.decode(bytes.subarray(start, end));
}
