import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, test } from 'vitest';
import { OnnxFormatError, readOnnxMetadata, readOnnxModelInfo } from '../../../core/fields/onnx-metadata.js';
import { FieldkilnError } from '../../../core/types.js';
import { writeSumModel } from '../../helpers/onnx-writer.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
const fixtures = path.resolve(repoRoot, '../shared/fixtures');
const manifest = JSON.parse(readFileSync(path.join(fixtures, 'manifest.json'), 'utf8'));
const onnxFixtures: any[] = manifest.fixtures.filter((f: any) => f.format === 'onnx');

describe('readOnnxMetadata', () => {
  test('the manifest lists three ONNX fixtures', () => {
    expect(onnxFixtures.map((f) => f.file).sort()).toEqual(['lantern_density.onnx', 'sphere_sdf.onnx', 'torus_sdf.onnx']);
  });

  test.each(onnxFixtures.map((f) => [f.file, f]))('%s: metadata equals the manifest\'s metadata_in_file; opset and IR version match', (file, f) => {
    const bytes = new Uint8Array(readFileSync(path.join(fixtures, file)));
    // Source: manifest.json metadata_in_file, written by the fixture generator (onnx 1.12).
    expect(readOnnxMetadata(bytes)).toEqual(f.metadata_in_file);
    const info = readOnnxModelInfo(bytes);
    // Source: manifest.json onnx.opset / onnx.ir_version / onnx.producer.
    expect(info.opsets['']).toBe(f.onnx.opset);
    expect(info.irVersion).toBe(f.onnx.ir_version);
    expect(info.producer).toBe(f.onnx.producer);
  });

  test('torus_sdf.onnx has no field.level (fixture README: left out on purpose)', () => {
    const meta = readOnnxMetadata(new Uint8Array(readFileSync(path.join(fixtures, 'torus_sdf.onnx'))));
    expect('field.level' in meta).toBe(false);
  });

  test('reads metadata from a hand-encoded model, and none when there is none', () => {
    expect(readOnnxMetadata(writeSumModel({ metadata: { a: '1', 'field.kind': 'sdf', 'ü': 'ø' } }))).toEqual({ a: '1', 'field.kind': 'sdf', 'ü': 'ø' });
    expect(readOnnxMetadata(writeSumModel({}))).toEqual({});
  });

  describe('malformed protobuf gives a FieldkilnError, never a crash or hang', () => {
    const sphere = new Uint8Array(readFileSync(path.join(fixtures, 'sphere_sdf.onnx')));

    test('truncated: the first half of a fixture (a length runs past the end)', () => {
      const half = sphere.subarray(0, sphere.length >> 1);
      expect(() => readOnnxMetadata(half, 'half.onnx')).toThrow(OnnxFormatError);
      expect(() => readOnnxMetadata(half, 'half.onnx')).toThrow(/^half\.onnx is not an ONNX model: the data ends early, so the file looks truncated \(field 7 at byte \d+ claims \d+ bytes/);
    });

    test('varint overrun: a tag whose varint never ends', () => {
      expect(() => readOnnxMetadata(new Uint8Array([0x08, 0xff, 0xff]))).toThrow(/varint at byte 1 runs past the end/);
      expect(() => readOnnxMetadata(new Uint8Array(12).fill(0xff))).toThrow(/the bytes are not a protobuf message \(a varint at byte 0 is longer than 10 bytes/);
    });

    test('text is not a model', () => {
      const text = new TextEncoder().encode('this is just some text, not a model\n');
      expect(() => readOnnxMetadata(text, 'x.onnx')).toThrow(FieldkilnError);
      expect(() => readOnnxMetadata(text, 'x.onnx')).toThrow(/^x\.onnx is not an ONNX model/);
    });

    test('empty bytes and a valid protobuf without a graph', () => {
      expect(() => readOnnxMetadata(new Uint8Array(0))).toThrow(/not an ONNX model: it is empty/);
      expect(() => readOnnxMetadata(new Uint8Array([0x08, 0x07]))).toThrow(/holds no graph/);
    });

    test('every prefix of a small model either parses or throws a FieldkilnError', () => {
      const model = writeSumModel({ metadata: { 'field.kind': 'sdf' } });
      for (let n = 0; n < model.length; n++) {
        try {
          readOnnxMetadata(model.subarray(0, n));
        } catch (e) {
          expect(e).toBeInstanceOf(FieldkilnError);
        }
      }
    });
  });
});
