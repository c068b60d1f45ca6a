import { chmodSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { openField } from '../../../app/fields/open-field.js';
import type { Field } from '../../../core/fields/field.js';
import { FieldkilnError } from '../../../core/types.js';
import { writeOnnxModel, writeSumModel } from '../../helpers/onnx-writer.js';
import { writeNpyF4 } from '../../helpers/npy-writer.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
const fixtures = path.resolve(repoRoot, '../shared/fixtures');
const manifest = JSON.parse(readFileSync(path.join(fixtures, 'manifest.json'), 'utf8'));
const onnxFixtures: any[] = manifest.fixtures.filter((f: any) => f.format === 'onnx');

let tmp: string;
beforeAll(() => {
  tmp = mkdtempSync(path.join(os.tmpdir(), 'fieldkiln-open-field-'));
});
afterAll(() => {
  rmSync(tmp, { recursive: true, force: true });
});

function writeTmp(name: string, bytes: Uint8Array | string): string {
  const p = path.join(tmp, name);
  writeFileSync(p, bytes);
  return p;
}

async function expectOpenError(p: string, pattern: RegExp, overrides = {}): Promise<string> {
  let caught: unknown;
  try {
    const f = await openField(p, overrides);
    await f.dispose?.();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(FieldkilnError);
  expect((caught as Error).message).toMatch(pattern);
  return (caught as Error).message;
}

describe.each(onnxFixtures.map((f) => [f.file, f]))('ONNX fixture %s', (file, fx) => {
  let field: Field;
  beforeAll(async () => {
    field = await openField(path.join(fixtures, file));
  });
  afterAll(async () => {
    await field?.dispose?.();
  });

  test('kind, bounds and level match the manifest', () => {
    // Source: manifest.json kind / bounds / level (torus has no field.level; the default 0 applies).
    expect(field.kind).toBe(fx.kind);
    expect(field.bounds).toEqual(fx.bounds);
    expect(field.defaultLevel).toBe(fx.level);
    expect(field.hasColor).toBe('color' in fx.outputs);
    expect(field.lipschitz).toBeUndefined();
    expect(field.description.details?.opset).toBe(fx.onnx.opset);
  });

  test('every manifest probe reproduces within 1e-4·(1+|v|) (fixture README, "probes")', async () => {
    const probes: any[] = fx.probes;
    const pts = new Float32Array(probes.flatMap((p) => p.point));
    const v = await field.evaluate(pts);
    probes.forEach((p, i) => {
      const want = p.network[fx.kind][0];
      expect(Math.abs(v[i] - want)).toBeLessThanOrEqual(1e-4 * (1 + Math.abs(want)));
    });
    if (field.hasColor) {
      const c = await field.evaluateColor!(pts);
      probes.forEach((p, i) => {
        for (let ch = 0; ch < 3; ch++) {
          const want = p.network.color[ch];
          expect(Math.abs(c[3 * i + ch] - want)).toBeLessThanOrEqual(1e-4 * (1 + Math.abs(want)));
        }
      });
    }
  });
});

test('small batches (5 points per run) give the same probe values as one batch', async () => {
  const fx = onnxFixtures.find((f) => f.file === 'sphere_sdf.onnx');
  const pts = new Float32Array(fx.probes.flatMap((p: any) => p.point));
  const small = await openField(path.join(fixtures, fx.file), {}, { batchSize: 5 });
  const v = await small.evaluate(pts);
  fx.probes.forEach((p: any, i: number) => expect(Math.abs(v[i] - p.network.sdf[0])).toBeLessThanOrEqual(1e-4 * (1 + Math.abs(p.network.sdf[0]))));
  await small.dispose?.();
});

describe('hand-built ONNX models', () => {
  const goodMeta = { 'field.kind': 'sdf', 'field.bounds': '-1,-1,-1,1,1,1', 'field.units': 'm' };

  test('a ReduceSum model evaluates x+y+z (the operator\'s definition in the ONNX spec)', async () => {
    const f = await openField(writeTmp('sum.onnx', writeSumModel({ metadata: goodMeta })));
    const v = await f.evaluate(new Float32Array([0.1, 0.2, 0.3, -1, 0.5, 0.25]));
    expect(v[0]).toBeCloseTo(0.6, 6);
    expect(v[1]).toBeCloseTo(-0.25, 6);
    expect(f.description.details?.opset).toBe(11);
    await f.dispose?.();
  });

  test('wrong input: x [N,4]', async () => {
    const p = writeTmp('x4.onnx', writeSumModel({ inputName: 'x', width: 4, metadata: goodMeta }));
    await expectOpenError(p, /^x4\.onnx: expected an input named 'points' of shape \[N,3\] float32.*; the model has inputs: x float32 \[N,4\]$/);
  });

  test("points [N,3] but the output is named 'foo'", async () => {
    const p = writeTmp('foo.onnx', writeSumModel({ outputName: 'foo', metadata: goodMeta }));
    await expectOpenError(p, /^foo\.onnx: expected exactly one output named sdf, density or occupancy.*the model has outputs: foo float32 \[N,1\]$/);
  });

  test('an output declared with the wrong shape [N,3]', async () => {
    const bytes = writeOnnxModel({
      inputs: [{ name: 'points', shape: ['N', 3] }],
      outputs: [{ name: 'sdf', shape: ['N', 3] }],
      nodes: [{ op: 'Identity', inputs: ['points'], outputs: ['sdf'] }],
      metadata: goodMeta,
    });
    await expectOpenError(writeTmp('wide.onnx', bytes), /^wide\.onnx: output 'sdf' must be float32 of shape \[N,1\].*sdf float32 \[N,3\]/);
  });

  test('an output declared [N,1] that really returns [N,3] is caught at run time, naming the output', async () => {
    // onnxruntime merges the declared [N,1] with the inferred [N,3] leniently and reports ["N",""].
    const bytes = writeOnnxModel({
      inputs: [{ name: 'points', shape: ['N', 3] }],
      outputs: [{ name: 'sdf', shape: ['N', 1] }],
      nodes: [{ op: 'Identity', inputs: ['points'], outputs: ['sdf'] }],
      metadata: goodMeta,
    });
    const f = await openField(writeTmp('liar.onnx', bytes));
    await expect(f.evaluate(new Float32Array(6))).rejects.toThrow(/^liar\.onnx: output 'sdf' returned 6 values for 2 points; expected shape \[N,1\]/);
    await f.dispose?.();
  });

  test('missing bounds metadata: error names --bounds; with the --bounds override it opens', async () => {
    const p = writeTmp('nobounds.onnx', writeSumModel({ metadata: { 'field.kind': 'sdf' } }));
    await expectOpenError(p, /^nobounds\.onnx: the model has no 'field.bounds' metadata; pass --bounds xmin,ymin,zmin,xmax,ymax,zmax/);
    const f = await openField(p, { bounds: [-2, -2, -2, 2, 2, 2] });
    expect(f.bounds).toEqual([-2, -2, -2, 2, 2, 2]);
    expect(f.defaultLevel).toBe(0);
    await f.dispose?.();
  });

  test('density model without a level: error names --level; with --level it opens', async () => {
    const p = writeTmp('dens.onnx', writeSumModel({ outputName: 'density', metadata: { ...goodMeta, 'field.kind': 'density' } }));
    await expectOpenError(p, /^dens\.onnx: this density model declares no 'field.level'.*pass --level/);
    const f = await openField(p, { level: 20 });
    expect(f.kind).toBe('density');
    expect(f.defaultLevel).toBe(20);
    await f.dispose?.();
  });
});

describe('file problems give clear errors', () => {
  test('truncated ONNX: the first half of a fixture', async () => {
    const bytes = readFileSync(path.join(fixtures, 'torus_sdf.onnx'));
    const p = writeTmp('half.onnx', bytes.subarray(0, bytes.length >> 1));
    await expectOpenError(p, /^half\.onnx: not a valid ONNX model \(onnxruntime: .+; the data ends early, so the file looks truncated \(field 7 at byte \d+ claims \d+ bytes but only \d+ remain\)\)$/);
  });

  test('a text file named .onnx: the runtime reason is kept', async () => {
    const p = writeTmp('x.onnx', 'solid cube\n  facet normal 0 0 1\nendsolid\n');
    await expectOpenError(p, /^x\.onnx: not a valid ONNX model \(onnxruntime: .*protobuf parsing failed.*; the file starts with plain text, not a binary ONNX model\)$/);
  });

  test('missing file, empty file, a directory', async () => {
    await expectOpenError(path.join(tmp, 'nope.onnx'), /^nope\.onnx: file not found \(/);
    await expectOpenError(writeTmp('empty.onnx', ''), /^empty\.onnx: the file is empty \(0 bytes\)/);
    const dir = path.join(tmp, 'adir.onnx');
    mkdirSync(dir);
    await expectOpenError(dir, /^adir\.onnx: is a directory/);
  });

  test('unknown extension lists the supported ones', async () => {
    await expectOpenError(writeTmp('mesh.stl', 'solid'), /^mesh\.stl: unknown file type '\.stl'; Fieldkiln reads \.onnx .*\.npy .*\.json/);
  });

  test.skipIf(process.getuid?.() === 0)('unreadable file (permission denied)', async () => {
    const p = writeTmp('locked.onnx', 'x');
    chmodSync(p, 0o000);
    try {
      await expectOpenError(p, /^locked\.onnx: cannot read the file: permission denied/);
    } finally {
      chmodSync(p, 0o644);
    }
  });

  test('a text file named .npy', async () => {
    writeTmp('t.json', JSON.stringify({ kind: 'sdf', bounds: [0, 0, 0, 1, 1, 1] }));
    await expectOpenError(writeTmp('t.npy', 'not numpy'), /^t\.npy: not a NumPy \.npy file/);
  });
});

describe('dense grids (.npy + .json sidecar)', () => {
  test('opens a fixture grid through its sidecar; probes reproduce (source: the sidecar)', async () => {
    const id = 'birdbath_sdf_grid128';
    const sidecar = JSON.parse(readFileSync(path.join(fixtures, `${id}.json`), 'utf8'));
    const f = await openField(path.join(fixtures, `${id}.npy`));
    expect(f.bounds).toEqual(sidecar.bounds);
    const v = await f.evaluate(new Float32Array(sidecar.probes.flatMap((p: any) => p.point_xyz)));
    sidecar.probes.forEach((p: any, i: number) => expect(Math.abs(v[i] - p.value)).toBeLessThan(1e-6));
  });

  test('missing sidecar: the error names the expected path', async () => {
    const p = writeTmp('lonely.npy', writeNpyF4([2, 2, 2], new Float32Array(8)));
    const msg = await expectOpenError(p, /^lonely\.npy: its sidecar is missing; expected /);
    expect(msg).toContain(path.join(tmp, 'lonely.json'));
  });

  test('a 2-D array is refused; a bad sidecar JSON is named', async () => {
    writeTmp('flat.json', JSON.stringify({ kind: 'sdf', bounds: [0, 0, 0, 1, 1, 1] }));
    await expectOpenError(writeTmp('flat.npy', writeNpyF4([2, 4], new Float32Array(8))), /^flat\.npy: expected a 3-D array .* shape \(2, 4\)/);
    writeTmp('broken.json', '{ "kind": "sdf", ');
    await expectOpenError(writeTmp('broken.npy', writeNpyF4([2, 2, 2], new Float32Array(8))), /^broken\.json: not valid JSON/);
  });

  test('color_file: an [nz,ny,nx,3] RGB grid is interpolated; a wrong shape is named', async () => {
    // 2x2x2 grid on the unit cube; red = x at the nodes, so the interpolated red at x = 0.25 is 0.25.
    const rgb = new Float32Array(24);
    for (let n = 0; n < 8; n++) rgb.set([n & 1, 0.5, 1], 3 * n);
    writeTmp('c_rgb.npy', writeNpyF4([2, 2, 2, 3], rgb));
    writeTmp('c.json', JSON.stringify({ kind: 'sdf', bounds: [0, 0, 0, 1, 1, 1], color_file: 'c_rgb.npy' }));
    const f = await openField(writeTmp('c.npy', writeNpyF4([2, 2, 2], new Float32Array(8))));
    expect(f.hasColor).toBe(true);
    const c = await f.evaluateColor!(new Float32Array([0.25, 0.5, 0.5]));
    expect(Array.from(c)).toEqual([0.25, 0.5, 1]);

    writeTmp('d_rgb.npy', writeNpyF4([2, 2, 2], new Float32Array(8)));
    writeTmp('d.json', JSON.stringify({ kind: 'sdf', bounds: [0, 0, 0, 1, 1, 1], color_file: 'd_rgb.npy' }));
    await expectOpenError(writeTmp('d.npy', writeNpyF4([2, 2, 2], new Float32Array(8))), /^d_rgb\.npy: expected shape \(2, 2, 2, 3\)/);
    writeTmp('e.json', JSON.stringify({ kind: 'sdf', bounds: [0, 0, 0, 1, 1, 1], color_file: 'gone.npy' }));
    await expectOpenError(writeTmp('e.npy', writeNpyF4([2, 2, 2], new Float32Array(8))), /^gone\.npy: file not found .*named by "color_file" in e\.json/);
  });

  test('overrides replace the sidecar values; bad --bounds is named', async () => {
    writeTmp('o.json', JSON.stringify({ kind: 'density', bounds: [0, 0, 0, 1, 1, 1] }));
    const p = writeTmp('o.npy', writeNpyF4([2, 2, 2], new Float32Array(8)));
    const f = await openField(p, { level: 3, bounds: [0, 0, 0, 2, 2, 2] });
    expect(f.defaultLevel).toBe(3);
    expect(f.bounds).toEqual([0, 0, 0, 2, 2, 2]);
    await expectOpenError(p, /^o\.npy: --bounds: bounds ymin/, { bounds: [0, 1, 0, 1, 1, 1] });
  });

  test('a grid sidecar opened as a .json says which .npy to open', async () => {
    await expectOpenError(path.join(fixtures, 'sphere_sdf_grid64.json'), /^sphere_sdf_grid64\.json: this is the sidecar of the grid sphere_sdf_grid64\.npy; open sphere_sdf_grid64\.npy instead/);
  });
});

describe('recipes (.json)', () => {
  const recipe = (root: unknown) => JSON.stringify({ format: 'fieldkiln-recipe', version: 1, root });

  test('a sphere recipe opens as an sdf field: |p| - r (analytic sphere distance)', async () => {
    const f = await openField(writeTmp('ball.recipe.json', recipe({ type: 'sphere', radius: 0.5 })));
    expect(f.kind).toBe('sdf');
    expect(f.description.source).toBe('recipe');
    const v = await f.evaluate(new Float32Array([0, 0, 0, 1, 0, 0]));
    expect(v[0]).toBeCloseTo(-0.5, 6);
    expect(v[1]).toBeCloseTo(0.5, 6);
  });

  test('overrides: --level and --bounds replace the recipe\'s; --kind must match', async () => {
    const p = writeTmp('ball2.recipe.json', recipe({ type: 'sphere', radius: 0.5 }));
    const f = await openField(p, { level: 0.1, bounds: [-1, -1, -1, 1, 1, 1] });
    expect(f.defaultLevel).toBe(0.1);
    expect(f.bounds).toEqual([-1, -1, -1, 1, 1, 1]);
    expect((await f.evaluate(new Float32Array([0, 0, 0])))[0]).toBeCloseTo(-0.5, 6);
    await expectOpenError(p, /^ball2\.recipe\.json: --kind density disagrees with the file, whose field kind is sdf/, { kind: 'density' });
  });

  test('an invalid recipe error starts with the file name', async () => {
    await expectOpenError(writeTmp('bad.recipe.json', '{"format": "something-else"}'), /^bad\.recipe\.json: /);
    await expectOpenError(writeTmp('bin.json', new Uint8Array([0xff, 0xfe, 0x00, 0x81])), /^bin\.json: not a recipe: the file is not UTF-8 text/);
  });
});
