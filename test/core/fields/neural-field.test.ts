import { describe, expect, test } from 'vitest';
import { NEURAL_DEFAULTS, createNeuralField, type NeuralFieldOptions } from '../../../core/fields/neural-field.js';
import { CancelledError, FieldkilnError } from '../../../core/types.js';

// A stand-in for an inference session: sdf = x + y + z, color = (x, y, z). Records each batch size.
function fakeModel(opts: { outName?: string; color?: boolean; sdfWidth?: number } = {}) {
  const calls: number[] = [];
  const outName = opts.outName ?? 'sdf';
  const run = async (points: Float32Array, count: number) => {
    calls.push(count);
    expect(points.length).toBe(3 * count);
    const width = opts.sdfWidth ?? 1;
    const v = new Float32Array(count * width);
    for (let i = 0; i < count; i++) for (let w = 0; w < width; w++) v[i * width + w] = points[3 * i] + points[3 * i + 1] + points[3 * i + 2];
    const out: Record<string, Float32Array> = { [outName]: v };
    if (opts.color) out.color = points.slice();
    return out;
  };
  return { run, calls };
}

const sdfMeta = { 'field.kind': 'sdf', 'field.bounds': '-1,-2,-3,1,2,3', 'field.units': 'm' };
const pointsIn = [{ name: 'points', type: 'float32', shape: ['N', 3] as (number | string)[] }];
const sdfOut = [{ name: 'sdf', type: 'float32', shape: ['N', 1] as (number | string)[] }];

function options(over: Partial<NeuralFieldOptions> = {}): NeuralFieldOptions {
  return { name: 'model.onnx', run: fakeModel().run, inputs: pointsIn, outputs: sdfOut, metadata: sdfMeta, ...over };
}

describe('createNeuralField', () => {
  test('reads kind, bounds and level from the metadata; no lipschitz bound for a network', () => {
    const f = createNeuralField(options({ metadata: { ...sdfMeta, 'field.level': '0.05' } }));
    expect(f.kind).toBe('sdf');
    expect(f.bounds).toEqual([-1, -2, -3, 1, 2, 3]);
    expect(f.defaultLevel).toBe(0.05);
    expect(f.lipschitz).toBeUndefined();
    expect(f.hasColor).toBe(false);
    expect(f.description).toMatchObject({ source: 'onnx', name: 'model.onnx', outputs: ['sdf'] });
  });

  test('sdf without field.level defaults to level 0 (fixture README metadata table)', () => {
    expect(createNeuralField(options()).defaultLevel).toBe(0);
  });

  test('overrides win over metadata: level and bounds', () => {
    const f = createNeuralField(options({ metadata: { ...sdfMeta, 'field.level': '0.05' }, overrides: { level: 0.2, bounds: [0, 0, 0, 1, 1, 1] } }));
    expect(f.defaultLevel).toBe(0.2);
    expect(f.bounds).toEqual([0, 0, 0, 1, 1, 1]);
  });

  test(`runs in batches of batchSize points (default ${NEURAL_DEFAULTS.batchSize}) and keeps the order`, async () => {
    expect(NEURAL_DEFAULTS.batchSize).toBe(16384); // chosen by measurement: neural-field.ts
    const m = fakeModel({ color: true });
    const f = createNeuralField(options({ run: m.run, outputs: [...sdfOut, { name: 'color', type: 'float32', shape: ['N', 3] }], batchSize: 4 }));
    const pts = new Float32Array(30).map((_, i) => i * 0.1);
    const v = await f.evaluate(pts);
    expect(m.calls).toEqual([4, 4, 2]);
    for (let i = 0; i < 10; i++) expect(v[i]).toBeCloseTo(pts[3 * i] + pts[3 * i + 1] + pts[3 * i + 2], 5);
    const c = await f.evaluateColor!(pts);
    expect(Array.from(c)).toEqual(Array.from(pts));
    expect(f.hasColor).toBe(true);
    expect(f.description.outputs).toEqual(['sdf', 'color']);
  });

  test('an empty batch makes no run call', async () => {
    const m = fakeModel();
    const f = createNeuralField(options({ run: m.run }));
    expect((await f.evaluate(new Float32Array(0))).length).toBe(0);
    expect(m.calls).toEqual([]);
  });

  test('an aborted signal stops between batches with CancelledError', async () => {
    const m = fakeModel();
    const f = createNeuralField(options({ run: m.run, batchSize: 1 }));
    const ac = new AbortController();
    ac.abort();
    await expect(f.evaluate(new Float32Array(6), ac.signal)).rejects.toBeInstanceOf(CancelledError);
    expect(m.calls).toEqual([]);
  });

  test('NaN outputs pass through (the sampler handles non-finite values)', async () => {
    const f = createNeuralField(options({ run: async (_p, n) => ({ sdf: new Float32Array(n).fill(NaN) }) }));
    expect(Number.isNaN((await f.evaluate(new Float32Array(3)))[0])).toBe(true);
  });

  describe('errors list what the model actually has', () => {
    const make = (over: Partial<NeuralFieldOptions>) => () => createNeuralField(options(over));

    test('wrong input', () => {
      const fn = make({ inputs: [{ name: 'x', type: 'float32', shape: ['N', 4] }] });
      expect(fn).toThrow(FieldkilnError);
      expect(fn).toThrow(/^model\.onnx: expected an input named 'points' of shape \[N,3\] float32.*; the model has inputs: x float32 \[N,4\]$/);
    });

    test('points with a fixed first axis, or an extra input', () => {
      expect(make({ inputs: [{ name: 'points', type: 'float32', shape: [1, 3] }] })).toThrow(/the model has inputs: points float32 \[1,3\]/);
      expect(make({ inputs: [...pointsIn, { name: 't', type: 'float32', shape: [1] }] })).toThrow(/inputs: points float32 \[N,3\], t float32 \[1\]/);
      expect(make({ inputs: [{ name: 'points', type: 'float16', shape: ['N', 3] }] })).toThrow(/points float16/);
    });

    test('no sdf/density/occupancy output, or two of them', () => {
      expect(make({ outputs: [{ name: 'foo', type: 'float32', shape: ['N', 1] }] })).toThrow(
        /expected exactly one output named sdf, density or occupancy.*the model has outputs: foo float32 \[N,1\]/,
      );
      expect(make({ outputs: [...sdfOut, { name: 'density', type: 'float32', shape: ['N', 1] }] })).toThrow(/outputs: sdf float32 \[N,1\], density float32 \[N,1\]/);
    });

    test('wrong output shape or type, wrong color shape', () => {
      expect(make({ outputs: [{ name: 'sdf', type: 'float32', shape: ['N', 3] }] })).toThrow(/output 'sdf' must be float32 of shape \[N,1\].*sdf float32 \[N,3\]/);
      expect(make({ outputs: [{ name: 'sdf', type: 'int64', shape: ['N', 1] }] })).toThrow(/sdf int64/);
      expect(make({ outputs: [...sdfOut, { name: 'color', type: 'float32', shape: ['N', 4] }] })).toThrow(/output 'color' must be float32 of shape \[N,3\]/);
    });

    test('an output of the wrong length at run time names the output', async () => {
      const f = createNeuralField(options({ run: fakeModel({ sdfWidth: 3 }).run, outputs: [{ name: 'sdf', type: 'float32', shape: ['N', ''] }] }));
      await expect(f.evaluate(new Float32Array(6))).rejects.toThrow(/^model\.onnx: output 'sdf' returned 6 values for 2 points; expected shape \[N,1\]/);
      const g = createNeuralField(options({ run: async () => ({}) }));
      await expect(g.evaluate(new Float32Array(3))).rejects.toThrow(/returned no output 'sdf'/);
    });

    test('kind: metadata must agree with the output; missing kind asks for --kind', () => {
      expect(make({ metadata: { ...sdfMeta, 'field.kind': 'density' } })).toThrow(/'field.kind' is 'density' but the model's output is named 'sdf'/);
      const { 'field.kind': _k, ...noKind } = sdfMeta;
      expect(make({ metadata: noKind })).toThrow(/no 'field.kind' metadata; pass --kind sdf\|density\|occupancy/);
      expect(createNeuralField(options({ metadata: noKind, overrides: { kind: 'sdf' } })).kind).toBe('sdf');
      expect(make({ overrides: { kind: 'occupancy' } })).toThrow(/--kind occupancy disagrees/);
    });

    test('bounds: missing asks for --bounds; bad metadata bounds are named', () => {
      const { 'field.bounds': _b, ...noBounds } = sdfMeta;
      expect(make({ metadata: noBounds })).toThrow(/no 'field.bounds' metadata; pass --bounds xmin,ymin,zmin,xmax,ymax,zmax/);
      expect(createNeuralField(options({ metadata: noBounds, overrides: { bounds: [-1, -1, -1, 1, 1, 1] } })).bounds).toEqual([-1, -1, -1, 1, 1, 1]);
      expect(make({ metadata: { ...sdfMeta, 'field.bounds': '1,2,3' } })).toThrow(/'field.bounds' \('1,2,3'\) is not usable: bounds must be six numbers/);
      expect(make({ metadata: { ...sdfMeta, 'field.bounds': '1,0,0,0,1,1' } })).toThrow(/xmin \(1\) must be below xmax \(0\)/);
      expect(make({ overrides: { bounds: [0, 0, 0, 0, 1, 1] } })).toThrow(/--bounds: bounds xmin/);
    });

    test('density without any level asks for --level; field.level or --level fixes it', () => {
      const meta = { ...sdfMeta, 'field.kind': 'density' };
      const outputs = [{ name: 'density', type: 'float32', shape: ['N', 1] }];
      expect(make({ metadata: meta, outputs })).toThrow(/density model declares no 'field.level'.*pass --level/);
      expect(createNeuralField(options({ metadata: { ...meta, 'field.level': '20' }, outputs })).defaultLevel).toBe(20);
      expect(createNeuralField(options({ metadata: meta, outputs, overrides: { level: 12.5 } })).defaultLevel).toBe(12.5);
      expect(make({ metadata: { ...meta, 'field.level': 'abc' }, outputs })).toThrow(/'field.level' \('abc'\) is not a finite number/);
    });

    test('occupancy without a level defaults to logit 0 (probability 0.5; fixture README)', () => {
      const f = createNeuralField(options({ metadata: { ...sdfMeta, 'field.kind': 'occupancy' }, outputs: [{ name: 'occupancy', type: 'float32', shape: ['N', 1] }] }));
      expect(f.kind).toBe('occupancy');
      expect(f.defaultLevel).toBe(0);
    });

    test('units other than metres', () => {
      expect(make({ metadata: { ...sdfMeta, 'field.units': 'mm' } })).toThrow(/'field.units' is 'mm'/);
    });

    test('misuse: batchSize 0 is a plain Error naming the function', () => {
      expect(make({ batchSize: 0 })).toThrow(/^createNeuralField: batchSize/);
    });
  });
});
