/**
 * Models that load but misbehave at run time: NaN for part of the bounds, and an operator that fails
 * inside onnxruntime. Each gets one clear message and leaves no file; NaN can be treated as empty space
 * on request, with a warning.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { runCli } from '../../helpers/run-cli.js';
import { writeOnnxModel } from '../../helpers/onnx-writer.js';

const dir = mkdtempSync(join(tmpdir(), 'fieldkiln-badmodel-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const META = { 'field.kind': 'sdf', 'field.bounds': '-1,-1,-1,1,1,1', 'field.units': 'm' };

/** sdf = −sqrt(x + y + z): NaN wherever x + y + z < 0, inside (negative) where it is positive. */
function nanModel(): string {
  const p = join(dir, 'half-nan.onnx');
  writeFileSync(
    p,
    writeOnnxModel({
      inputs: [{ name: 'points', shape: ['N', 3] }],
      outputs: [{ name: 'sdf', shape: ['N', 1] }],
      nodes: [
        { op: 'ReduceSum', inputs: ['points'], outputs: ['s'], ints: { axes: [1] }, int: { keepdims: 1 } },
        { op: 'Sqrt', inputs: ['s'], outputs: ['r'] },
        { op: 'Neg', inputs: ['r'], outputs: ['sdf'] },
      ],
      metadata: META,
    }),
  );
  return p;
}

/** MatMul of [N,3] by [N,3]: shapes only clash at run time, so the runtime itself throws. */
function throwingModel(): string {
  const p = join(dir, 'throws.onnx');
  writeFileSync(
    p,
    writeOnnxModel({
      inputs: [{ name: 'points', shape: ['N', 3] }],
      outputs: [{ name: 'sdf', shape: ['N', 1] }],
      nodes: [
        { op: 'MatMul', inputs: ['points', 'points'], outputs: ['m'] },
        { op: 'ReduceSum', inputs: ['m'], outputs: ['sdf'], ints: { axes: [1] }, int: { keepdims: 1 } },
      ],
      metadata: META,
    }),
  );
  return p;
}

describe('models whose input does not fit', () => {
  const cases: [string, { name: string; elemType?: number; shape: (number | string)[] }, RegExp][] = [
    ['no float input (int64 points)', { name: 'points', elemType: 7, shape: ['N', 3] }, /the model has inputs: points int64 \[N,3\]/],
    ['input of the wrong rank', { name: 'points', shape: ['N', 3, 1] }, /the model has inputs: points float32 \[N,3,1\]/],
    ['input of the wrong width', { name: 'points', shape: ['N', 2] }, /the model has inputs: points float32 \[N,2\]/],
  ];
  for (const [name, input, pattern] of cases) {
    test(name, () => {
      const p = join(dir, name.replace(/\W+/g, '-') + '.onnx');
      writeFileSync(p, writeOnnxModel({ inputs: [input], outputs: [{ name: 'sdf', elemType: input.elemType, shape: ['N', 1] }], nodes: [{ op: 'Identity', inputs: ['points'], outputs: ['sdf'] }], metadata: META }));
      const out = join(dir, 'in.glb');
      const r = runCli(['bake', p, '--out', out, '--depth', '4', '--quiet']);
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(/expected an input named 'points' of shape \[N,3\] float32/);
      expect(r.stderr).toMatch(pattern);
      expect(existsSync(out)).toBe(false);
    });
  }
});

describe('models that fail at run time', () => {
  test('NaN for part of the bounds: the count and the first point by default, no file', () => {
    const out = join(dir, 'nan.glb');
    const r = runCli(['bake', nanModel(), '--out', out, '--depth', '5', '--quiet']);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/returned \d+ non-finite values \(NaN or ±Inf\) among \d+ samples; the first at \(-?[\d.]+, -?[\d.]+, -?[\d.]+\) m/);
    expect(r.stderr).toMatch(/--nonfinite outside/);
    expect(existsSync(out)).toBe(false);
  });

  test('NaN with --nonfinite outside: a closed mesh and a warning', () => {
    const out = join(dir, 'nan-outside.glb');
    const rep = join(dir, 'nan-outside.json');
    const r = runCli(['bake', nanModel(), '--out', out, '--report', rep, '--depth', '5', '--nonfinite', 'outside', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    const report = JSON.parse(readFileSync(rep, 'utf8'));
    expect(report.sampling.nonFinite).toBeGreaterThan(0);
    expect(report.mesh.watertight).toBe(true);
    expect(report.warnings.join('\n')).toMatch(/NaN or ±Inf .* treated as outside/);
  });

  test('an operator that throws inside the runtime: one message naming the model, no file', () => {
    const out = join(dir, 'throws.glb');
    const r = runCli(['bake', throwingModel(), '--out', out, '--depth', '4', '--quiet']);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/throws\.onnx: inference failed \(onnxruntime: /);
    expect(r.stderr.match(/error:/g)?.length).toBe(1);
    expect(existsSync(out)).toBe(false);
  });
});
